// Package walk is recto's one folder walker. Every command and package
// that looks for files under a folder (page images for recto ocr and
// recto run, OCR outputs for estimate, triage and correct, ground truth
// and hypotheses for score, running text for lexicon build and correct
// train) lists them with Files, so hidden entries, the output folder
// inside the input, unreadable folders and odd file types are treated the
// same way everywhere. Which names are wanted is the caller's: page images
// are ocr.IsPageFile, the one list of formats.
package walk

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"
)

// ErrIsFolder is passed to Options.Bad for a folder whose name Match
// wants (a folder named "p0001.txt"): it is not a file, but its contents
// are still walked.
var ErrIsFolder = errors.New("is a folder, not a file")

// Options says what Files lists. The zero value lists every file and
// stops at the first folder that cannot be read.
type Options struct {
	// Match reports whether a file's name (its last element, not the
	// path) is wanted; nil wants every file.
	Match func(name string) bool
	// Skip is a folder left out with everything in it when it lies under
	// the root (the output folder inside the input, or the other root);
	// "" for none. It is compared as the same file (os.SameFile), so a
	// different spelling of the same folder is skipped too.
	Skip string
	// Bad is called, in walk order, for each entry below the root that
	// cannot be used: a folder that cannot be read (with its error; the
	// walk goes on without it) and a folder whose name Match wants
	// (ErrIsFolder). nil: a folder that cannot be read stops the walk with
	// its error, and folders named like wanted files are walked silently.
	Bad func(path string, err error)
}

// Files walks root and returns the paths, relative to root and
// '/'-separated, of the files under it whose names o.Match wants, sorted
// as strings. It leaves out entries whose names start with "." (hidden
// files and folders; the root itself may be hidden), o.Skip, and entries
// that are neither regular files nor symbolic links (pipes, sockets,
// devices); symbolic links to folders are not followed. ignored counts
// the files left out because Match did not want them or because of their
// type; hidden entries are not counted. The error, which names the path,
// is that of a root that cannot be read, or with o.Bad nil that of the
// first folder below it that cannot be read.
func Files(root string, o Options) (files []string, ignored int, err error) {
	var skip os.FileInfo
	if o.Skip != "" {
		skip, _ = os.Stat(o.Skip) // a skip that does not exist lies nowhere
	}
	err = filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			if p == root || o.Bad == nil {
				return err
			}
			o.Bad(p, err)
			if d != nil && d.IsDir() {
				return fs.SkipDir
			}
			return nil
		}
		if p == root {
			return nil
		}
		name := d.Name()
		if strings.HasPrefix(name, ".") {
			if d.IsDir() {
				return fs.SkipDir
			}
			return nil
		}
		if d.IsDir() {
			if skip != nil {
				if fi, err := os.Stat(p); err == nil && os.SameFile(fi, skip) {
					return fs.SkipDir
				}
			}
			if o.Bad != nil && o.Match != nil && o.Match(name) {
				o.Bad(p, ErrIsFolder)
			}
			return nil
		}
		if t := d.Type(); !t.IsRegular() && t&fs.ModeSymlink == 0 || o.Match != nil && !o.Match(name) {
			ignored++
			return nil
		}
		rel, err := filepath.Rel(root, p)
		if err != nil {
			return err
		}
		files = append(files, filepath.ToSlash(rel))
		return nil
	})
	if err != nil {
		return nil, 0, err // an *fs.PathError: it names the path
	}
	slices.Sort(files)
	return files, ignored, nil
}
