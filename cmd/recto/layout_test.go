package main

import (
	"go/parser"
	"go/token"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// TestLayoutMap checks DEVELOPERS.md's map against the tree (issue 15:
// "each tree holds only its own subject, and imports flow cmd → run →
// ocr, quality, correct, lexicon"): every package is named in the Layout
// section, nothing outside cmd/ imports cmd/, lexicon uses no other
// library tree but the pool, and only the packages the map names as cgo
// import "C" (the import rules of the Go distribution's own cmd/go/internal
// tree, common practice; cgo: Go documentation, cmd/cgo).
func TestLayoutMap(t *testing.T) {
	root := filepath.Join("..", "..")
	doc, err := os.ReadFile(filepath.Join(root, "DEVELOPERS.md"))
	if err != nil {
		t.Fatal(err)
	}
	layout, _, _ := strings.Cut(string(doc), "## Data flow")
	_, layout, _ = strings.Cut(layout, "## Layout")

	imports := map[string][]string{} // package dir -> recto imports and "C"
	err = filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		name := d.Name()
		if d.IsDir() {
			if p != root && (strings.HasPrefix(name, ".") || name == "testdata") {
				return fs.SkipDir
			}
			return nil
		}
		if !strings.HasSuffix(name, ".go") || strings.HasSuffix(name, "_test.go") {
			return nil
		}
		f, err := parser.ParseFile(token.NewFileSet(), p, nil, parser.ImportsOnly)
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(root, filepath.Dir(p))
		dir := filepath.ToSlash(rel)
		if _, ok := imports[dir]; !ok {
			imports[dir] = nil
		}
		for _, im := range f.Imports {
			path, _ := strconv.Unquote(im.Path.Value)
			if path == "C" || strings.HasPrefix(path, "recto/") {
				imports[dir] = append(imports[dir], path)
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(imports) < 10 {
		t.Fatalf("found %d packages under %s; the walk went wrong", len(imports), root)
	}
	cgo := []string{"ocr/tesseract", "ocr/lept", "ocr/internal/leptref"}
	for dir, ims := range imports {
		if dir == "." {
			continue
		}
		if !strings.Contains(layout, dir+"/") && !strings.Contains(layout, " "+filepath.Base(dir)+"/") {
			t.Errorf("package %s is not in DEVELOPERS.md's Layout", dir)
		}
		for _, im := range ims {
			switch {
			case im == "C" && !slices.Contains(cgo, dir):
				t.Errorf("%s uses cgo; the map says only %s do", dir, strings.Join(cgo, ", "))
			case strings.HasPrefix(im, "recto/cmd/") && !strings.HasPrefix(dir, "cmd/"):
				t.Errorf("%s imports %s: nothing outside cmd imports cmd", dir, im)
			case dir == "lexicon" && im != "recto/ocr/par" && !strings.HasPrefix(im, "recto/internal/"):
				t.Errorf("lexicon imports %s: it may use only the pool and internal/", im)
			}
		}
	}
}
