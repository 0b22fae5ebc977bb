package run

import (
	"fmt"
	"io/fs"
	"path"
	"path/filepath"
	"sort"
	"strings"

	"recto/ocr"
	"recto/quality"
)

// Image is one page file found under a folder by FindImages.
type Image struct {
	Rel   string // slash-separated, relative to the root
	Stem  string // output name: Rel without its extension, or with it when two files share the stem
	Path  string // the root joined with Rel
	Title string // first folder of Rel, or the root folder's name for a file in the root (as in recto score)
}

// FindImages is recto's one page walker: it searches root for page files
// (ocr.IsPageFile: one list of formats for every command), skipping hidden
// files and folders (names starting with "."), the folder skip (a run or
// output folder inside root; "" for none) and anything but regular files
// and symbolic links. An unreadable sub-folder does not stop the walk. It
// returns the files sorted by Rel and the number of other entries
// ignored; only an unreadable root is an error.
func FindImages(root, skip string) ([]Image, int, error) {
	rootName := filepath.Base(root)
	if abs, err := filepath.Abs(root); err == nil {
		rootName = filepath.Base(abs)
	}
	var absSkip string
	if skip != "" {
		absSkip, _ = filepath.Abs(skip)
	}
	var found []Image
	ignored := 0
	err := filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			if p == root {
				return err
			}
			ignored++ // an unreadable sub-folder must not stop the batch
			if d != nil && d.IsDir() {
				return fs.SkipDir
			}
			return nil
		}
		name := d.Name()
		if p != root && strings.HasPrefix(name, ".") {
			if d.IsDir() {
				return fs.SkipDir
			}
			return nil
		}
		if d.IsDir() {
			if absSkip != "" {
				if abs, err := filepath.Abs(p); err == nil && abs == absSkip {
					return fs.SkipDir
				}
			}
			return nil
		}
		if !d.Type().IsRegular() && d.Type()&fs.ModeSymlink == 0 || !ocr.IsPageFile(name) {
			ignored++
			return nil
		}
		rel, err := filepath.Rel(root, p)
		if err != nil {
			return err
		}
		rel = filepath.ToSlash(rel)
		title, _ := quality.TitlePage(rel, rootName)
		found = append(found, Image{Rel: rel, Path: p, Title: title})
		return nil
	})
	if err != nil {
		return nil, 0, fmt.Errorf("%q: %w", root, err)
	}
	sort.Slice(found, func(i, j int) bool { return found[i].Rel < found[j].Rel })
	stems := map[string]int{}
	for _, f := range found {
		stems[strings.TrimSuffix(f.Rel, path.Ext(f.Rel))]++
		// A stem equal to another image's whole name (p1.tif.png beside
		// p1.tif) keeps its extension too: every Stem is then unique.
		stems[f.Rel]++
	}
	for i, f := range found {
		found[i].Stem = strings.TrimSuffix(f.Rel, path.Ext(f.Rel))
		if stems[found[i].Stem] > 1 {
			found[i].Stem = f.Rel // p1.png and p1.tif side by side keep apart
		}
	}
	return found, ignored, nil
}

// extList lists the page file extensions for messages.
func extList() string { return strings.Join(ocr.PageExtensions(), " ") }
