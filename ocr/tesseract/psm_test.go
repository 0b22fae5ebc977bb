//go:build cgo && !notesseract

package tesseract

import (
	"context"
	"strings"
	"testing"

	"recto/ocr"
	"recto/ocr/synth"
)

// TestEveryPSMReachesEngine asks the engine itself, after a recognition,
// which page segmentation mode it used, for every mode recto accepts.
// Before this check existed the mode was set on an engine that
// gosseract's initialisation then replaced, and every value gave 6.
// The modes' meanings are those of Tesseract's publictypes.h
// (PageSegMode); the behaviour checked for some of them is what that
// header documents (7 and 13: one text line; 8 and 9: one word; 6: one
// uniform block, so no paragraph break).
func TestEveryPSMReachesEngine(t *testing.T) {
	p, _, err := synth.Render("Pellingfold harbour board met on Tuesday.\n\nThe river warden spoke.",
		synth.Layout{WidthMM: 120, HeightMM: 40, MarginMM: 5, FontSizePt: 14})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := New(Config{PSM: 14}); err == nil {
		t.Error("New accepted page segmentation mode 14")
	}
	for psm := 0; psm <= 13; psm++ {
		e := engineOrSkip(t, Config{PSM: psm})
		words, err := e.Recognize(context.Background(), p.Image, 300)
		if err != nil {
			t.Fatalf("psm %d: %v", psm, err)
		}
		want := psm
		if psm == 0 {
			want = DefaultPSM
		}
		if got := e.(*engine).pageSegMode(); got != want {
			t.Errorf("Config{PSM: %d}: the engine used mode %d, want %d", psm, got, want)
		}
		rec := &ocr.Record{Words: words}
		text := rec.Text()
		lines := map[int]bool{}
		for _, w := range words {
			lines[w.Line] = true
		}
		switch want {
		case 3:
			if !strings.Contains(text, "\n\n") || !strings.Contains(text, "Pellingfold") {
				t.Errorf("psm %d: want two paragraphs with the blank line between them, got %q", psm, text)
			}
		case 6:
			if strings.Contains(text, "\n\n") || len(lines) != 2 {
				t.Errorf("psm 6 (one block): want two lines and no paragraph break, got %q", text)
			}
		case 7, 13:
			if len(lines) != 1 {
				t.Errorf("psm %d (one line): got %d lines: %q", psm, len(lines), text)
			}
		case 8, 9:
			if len(words) != 1 {
				t.Errorf("psm %d (one word): got %d words: %q", psm, len(words), text)
			}
		}
		e.Close()
	}
}

// TestTwoColumnsReadColumnByColumn reads the vendored two-column magazine
// scan (testdata/engine/8087_054.3B.tif, from Tesseract's test data). Its
// zone file (8087_054.3B.uzn, same source) puts the left column's text at
// x 261-1261 and the right column's at x 1288-2285; only the title
// (y 379-439) and a caption (y 2290-2638) straddle the gutter. With the
// default mode no line of the reading may cross the gutter outside those
// two zones, and each engine block is one TextBlock of the ALTO. The
// engine alone in mode 6 (one uniform block), on the same page, does run
// lines across both columns: the check can fail.
func TestTwoColumnsReadColumnByColumn(t *testing.T) {
	if testing.Short() {
		t.Skip("reads an A4 page twice (about 7 s)")
	}
	const path = "../../testdata/engine/8087_054.3B.tif"
	crossing := func(rec *ocr.Record) (n, lines int) {
		type span struct{ x0, x1, y int }
		ls := map[int]*span{}
		for _, w := range rec.Words {
			s := ls[w.Line]
			if s == nil {
				s = &span{w.Box.X, w.Box.X + w.Box.W, w.Box.Y}
				ls[w.Line] = s
			}
			s.x0, s.x1 = min(s.x0, w.Box.X), max(s.x1, w.Box.X+w.Box.W)
		}
		for _, s := range ls {
			inTitle := s.y >= 350 && s.y <= 460
			inCaption := s.y >= 2270 && s.y <= 2660
			if s.x0 < 1250 && s.x1 > 1300 && !inTitle && !inCaption {
				n++
			}
		}
		return n, len(ls)
	}
	e := engineOrSkip(t, Config{})
	rec, _, err := ocr.ProcessFile(context.Background(), e, path, ocr.Options{})
	if err != nil {
		t.Fatal(err)
	}
	n, lines := crossing(rec)
	blocks := map[int]bool{}
	for _, w := range rec.Words {
		blocks[w.Block] = true
	}
	t.Logf("default mode: %d words, %d lines, %d blocks, %d lines across the gutter", len(rec.Words), lines, len(blocks), n)
	if n > 0 {
		t.Errorf("%d lines run across the gutter; text starts:\n%.600s", n, rec.Text())
	}
	if len(blocks) < 4 {
		t.Errorf("%d engine blocks on a page of 11 zones", len(blocks))
	}
	var alto strings.Builder
	if err := ocr.WriteALTO(&alto, rec); err != nil {
		t.Fatal(err)
	}
	if got := strings.Count(alto.String(), "<TextBlock "); got != len(blocks) {
		t.Errorf("ALTO has %d TextBlocks for %d engine blocks", got, len(blocks))
	}

	e6 := engineOrSkip(t, Config{PSM: 6})
	rec6, _, err := ocr.ProcessFile(context.Background(), e6, path, ocr.Options{NoPrepare: true})
	if err != nil {
		t.Fatal(err)
	}
	n6, lines6 := crossing(rec6)
	t.Logf("mode 6, no preparation: %d lines, %d across the gutter", lines6, n6)
	if n6 < lines6/4 {
		t.Errorf("mode 6 ran only %d of %d lines across the gutter: the check would not see a single-block reading", n6, lines6)
	}
}
