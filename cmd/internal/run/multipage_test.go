package run

import (
	"context"
	"image"
	"os"
	"path/filepath"
	"testing"

	"recto/cmd/internal/run/runtest"
	"recto/ocr"
)

// TestMultiPageTIFFPages: a multi-page TIFF is one page per page (issue 11
// part 2), named by ocr.PageName ("Title B/reel-07/p0002"), its ground
// truth found by that name, and each page reads and scores exactly as the
// same page given as a single image; a rerun finds every page done.
func TestMultiPageTIFFPages(t *testing.T) {
	coll, truth := runtest.Collection(t, 1, 3, false)
	var imgs []*image.Gray
	for _, n := range []string{"p000", "p001", "p002"} {
		d, err := ocr.DecodeFile(filepath.Join(coll, "Title A", n+".png"), ocr.DecodeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		imgs = append(imgs, d.Image.(*image.Gray))
	}
	runtest.MultiPageTIFF(t, filepath.Join(coll, "Title B", "reel-07.tif"), imgs)
	for single, page := range map[string]string{"p000": "p0001", "p002": "p0003"} {
		data, err := os.ReadFile(filepath.Join(truth, "Title A", single+".txt"))
		if err != nil {
			t.Fatal(err)
		}
		runtest.MustWrite(t, filepath.Join(truth, "Title B", "reel-07", page+".txt"), data)
	}
	out := filepath.Join(t.TempDir(), "run")
	o := Options{Collection: coll, Out: out, Truth: truth, NewEngine: runtest.Engine(coll, 0), NoPrepare: true, Quiet: true, Correct: 1, Rescan: 1}
	sum, err := Run(context.Background(), o)
	if err != nil {
		t.Fatal(err)
	}
	if sum.Pages != 6 || sum.Done != 6 {
		t.Fatalf("%d pages, %d done; want 6 and 6 (3 images, 3 TIFF pages)", sum.Pages, sum.Done)
	}
	rows := map[string]int{}
	all := runtest.LedgerRows(t, out)
	for i, r := range all {
		rows[r.Page] = i
	}
	for single, page := range map[string]string{"Title A/p000": "Title B/reel-07/p0001", "Title A/p001": "Title B/reel-07/p0002", "Title A/p002": "Title B/reel-07/p0003"} {
		i, ok := rows[page]
		j, ok2 := rows[single]
		if !ok || !ok2 {
			t.Fatalf("pages %q or %q missing from the ledger", page, single)
		}
		a, b := all[i], all[j]
		if a.Title != "Title B" || a.HasTruth != b.HasTruth || a.RefChars != b.RefChars || a.CharErrs != b.CharErrs || a.WordErrs != b.WordErrs {
			t.Errorf("%s: title %q, truth %v, %d/%d char errors; the single image %s: %v, %d/%d",
				page, a.Title, a.HasTruth, a.CharErrs, a.RefChars, single, b.HasTruth, b.CharErrs, b.RefChars)
		}
		txt := func(r int) string {
			for _, o := range all[r].Outputs {
				if filepath.Ext(o) == ocr.SuffixText {
					data, _ := os.ReadFile(filepath.Join(out, o))
					return string(data)
				}
			}
			return ""
		}
		if txt(i) == "" || txt(i) != txt(j) {
			t.Errorf("%s: text %q, the single image's %q", page, txt(i), txt(j))
		}
	}
	if !all[rows["Title B/reel-07/p0001"]].HasTruth {
		t.Error("the ground truth of reel-07/p0001 was not found by the page's name")
	}
	again, err := Run(context.Background(), o)
	if err != nil || again.Skipped != 6 || again.Done != 0 {
		t.Errorf("rerun: %+v, %v; want every page skipped", again, err)
	}
}
