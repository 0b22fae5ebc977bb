package report

import (
	"bytes"
	"flag"
	"fmt"
	"image"
	"image/color"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"recto/quality"
)

var update = flag.Bool("update", false, "rewrite testdata/report.golden.html")

// bootstrap is the interval the run wires in (run.cerInterval): package
// quality's percentile bootstrap over pages, fixed seed.
func bootstrap(errs, units []int) (float64, float64, bool) {
	pages := make([]quality.Counts, len(errs))
	for i := range errs {
		pages[i] = quality.Counts{Chars: units[i], CharErrors: errs[i]}
	}
	return quality.BootstrapCER(pages, 0, 0)
}

// documentPages is a small fictional delivery: two titles with ground
// truth on some pages, a blank and a picture page, a failed page.
func documentPages() []Page {
	var pages []Page
	add := func(title string, i int, dec string, pred float64, truth bool, errs int) {
		rel := fmt.Sprintf("%s/p%02d.tif", title, i)
		p := Page{Rel: rel, Title: title, Page: strings.TrimSuffix(rel, ".tif"), Decision: dec, PredictedCER: pred,
			Image: "../../scans/" + rel, Text: "../ocr/" + rel + ".txt", Snippet: "The Wrenmouth ferry sailed at noon",
			ThumbKey: fmt.Sprintf("%016x-1", i+len(title)*100)}
		if dec == "correct" {
			p.Corrections = 4
			p.Reasons = []string{"many words not in the lexicon"}
		}
		if truth {
			p.HasTruth, p.RefChars, p.RefWords = true, 2000, 340
			p.CharErrs, p.CharErrsAfter = errs, errs*3/4
			p.WordErrs, p.WordErrsAfter = errs/3, errs/4
			p.OrderFree, p.FlexErrs, p.FlexErrsAfter = true, errs*2/3, errs/2
			p.BagErrs, p.BagErrsAfter = errs/2, errs*2/5
		}
		pages = append(pages, p)
	}
	for i := 1; i <= 8; i++ {
		dec := "accept"
		if i%3 == 0 {
			dec = "correct"
		}
		add("Alder Gazette", i, dec, 0.01+0.004*float64(i), i%2 == 1, 20+9*i)
	}
	for i := 1; i <= 6; i++ {
		add("Bell Ledger", i, "correct", 0.03+0.01*float64(i), i <= 4, 60+25*i)
	}
	add("Bell Ledger", 7, "blank", 0, false, 0)
	pages[len(pages)-1].Reasons = []string{"no ink worth recognising"}
	add("Bell Ledger", 8, "picture", 0.5, false, 0)
	pages[len(pages)-1].Reasons = []string{"few letter-shaped marks"}
	pages = append(pages, Page{Rel: "Bell Ledger/p09.tif", Title: "Bell Ledger", Page: "Bell Ledger/p09", Failed: true,
		Error: `decode "p09.tif": unexpected EOF`, Image: "../../scans/Bell Ledger/p09.tif"})
	return pages
}

func documentOptions() Options {
	return Options{
		Name: "Wrenmouth Harbour Archive", Interval: bootstrap, TargetCER: 0.03,
		About: About{
			Collection: "Wrenmouth Harbour Archive",
			First:      time.Date(2026, 11, 30, 9, 12, 0, 0, time.UTC), Last: time.Date(2026, 11, 30, 10, 47, 0, 0, time.UTC),
			Recto: "v0.9.0", Engine: "Tesseract 5.3.0", Lang: "eng", Correct: 0.02, Rescan: 0.10, RescanFactor: 0.8,
			QualityModel: "embedded (quality/model/default.json)", QualityModelSum: strings.Repeat("ab", 32),
			Lexicons:      []Named{{Name: "embedded English (en.lex.gz)", SHA256: strings.Repeat("cd", 32)}},
			Normalisation: quality.NormOptions{}.String(),
			Interval:      "percentile bootstrap over the pages with ground truth (2000 resamples, fixed seed)",
		},
		Thumb: func(p Page) (image.Image, error) { return fakeScan(p.Rel), nil },
	}
}

// fakeScan is a grey A4-shaped page with dark bands for lines of text.
func fakeScan(rel string) image.Image {
	g := image.NewGray(image.Rect(0, 0, 620, 877))
	for y := range 877 {
		for x := range 620 {
			v := uint8(245)
			if x > 60 && x < 560 && y > 80 && y < 800 && (y/14)%2 == 0 && (x+len(rel)*7)%97 > 6 {
				v = 40
			}
			g.SetGray(x, y, color.Gray{v})
		}
	}
	return g
}

// TestHTMLGolden compares report.html of a fixed delivery, with fixed
// dates, byte for byte with testdata/report.golden.html (go test -update
// rewrites it; read the diff). It also checks that the thumbnails were
// made once: a second Write with Thumb failing keeps them.
func TestHTMLGolden(t *testing.T) {
	dir := t.TempDir()
	if err := Write(dir, documentPages(), documentOptions()); err != nil {
		t.Fatal(err)
	}
	got, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	golden := filepath.Join("testdata", "report.golden.html")
	if *update {
		if err := os.MkdirAll("testdata", 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(golden, got, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("report.html differs from %s; if the change is meant, run go test -update and read the diff", golden)
	}
	thumbs, _ := filepath.Glob(filepath.Join(dir, "thumbs", "*.png"))
	if len(thumbs) == 0 {
		t.Fatal("no thumbnails made")
	}
	o := documentOptions()
	calls := 0
	o.Thumb = func(Page) (image.Image, error) { calls++; return nil, fmt.Errorf("must not be called") }
	if err := Write(dir, documentPages(), o); err != nil {
		t.Fatal(err)
	}
	again, _ := os.ReadFile(filepath.Join(dir, "report.html"))
	if calls != 0 || !bytes.Equal(again, got) {
		t.Errorf("second build decoded %d images (want 0: the thumbnails are kept) or changed the page", calls)
	}
}
