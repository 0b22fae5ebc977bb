package run

import (
	"errors"
	"fmt"
	"path"
	"path/filepath"
	"strings"

	"recto/internal/walk"
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

// FindImages lists the page files under root for recto ocr and recto run:
// the one walker (internal/walk: hidden files and folders, the folder skip
// — a run or output folder inside root, "" for none — and anything but
// regular files and symbolic links left out) with the one list of formats
// (ocr.IsPageFile). An unreadable sub-folder does not stop the walk. It
// returns the files sorted by Rel and the number of other entries
// ignored; only an unreadable root is an error.
func FindImages(root, skip string) ([]Image, int, error) {
	rootName := filepath.Base(root)
	if abs, err := filepath.Abs(root); err == nil {
		rootName = filepath.Base(abs)
	}
	ignored := 0
	rels, n, err := walk.Files(root, walk.Options{Match: ocr.IsPageFile, Skip: skip, Bad: func(_ string, err error) {
		if !errors.Is(err, walk.ErrIsFolder) {
			ignored++ // an unreadable sub-folder must not stop the batch
		}
	}})
	if err != nil {
		return nil, 0, fmt.Errorf("%q: %w", root, err)
	}
	ignored += n
	found := make([]Image, len(rels))
	for i, rel := range rels {
		title, _ := quality.TitlePage(rel, rootName)
		found[i] = Image{Rel: rel, Path: filepath.Join(root, filepath.FromSlash(rel)), Title: title}
	}
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
