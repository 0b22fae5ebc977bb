package quality

import (
	"context"
	"image"
	"path/filepath"
	"strings"
	"testing"

	"recto/ocr"
	"recto/ocr/ocrtest"
	"recto/ocr/synth"
)

// failedEngine reads nothing: every page's reading fails.
type failedEngine struct{}

func (failedEngine) Recognize(context.Context, *image.Gray, int) ([]ocr.Word, error) { return nil, nil }
func (failedEngine) Close() error                                                    { return nil }

// TestTriageFromTheImage (the real-scans issue, part 5): text, picture or
// blank is decided from the image. Each page is prepared by ocr.Process
// with an engine that reads nothing, so that only the image can tell a
// failed reading of text from a picture: pages of text (ocr/synth pages at
// 100 dpi, clean, worn, noisy and faded, with no resolution tag; real scans
// of print from leptonlib's prog/ folder) go to rescan with a reason that
// says their ink has the shape of text; photographs, paintings and drawings
// of the same folder are decided picture (their scans are clean); a blank
// synth page is blank.
func TestTriageFromTheImage(t *testing.T) {
	if testing.Short() {
		t.Skip(longSequential)
	}
	decide := func(img image.Image, dpi float64) Verdict {
		rec, _, err := ocr.Process(context.Background(), failedEngine{}, img, dpi, ocr.Options{})
		if err != nil {
			t.Fatal(err)
		}
		return Triage(PageFeatures(rec, nil), nil, Thresholds{})
	}
	text := "The harbour board of Saltmarsh met on the first Tuesday of March to hear the report of the river warden.\n\n"
	for _, kind := range []string{"clean", "worn", "noisy", "faded", "blank"} {
		k, _ := synth.KindByName(kind)
		body := strings.Repeat(text, 12)
		if k.Blank {
			body = ""
		}
		clean, _, err := synth.Render(body, synth.Layout{})
		if err != nil {
			t.Fatal(err)
		}
		d := k.D
		d.Scale, d.Blur, d.Seed = 100.0/300, max(0.8, k.D.Blur), 7
		p := synth.Degrade(clean, d)
		v := decide(p.Image, 0)
		t.Logf("synth %s at 100 dpi, untagged: %s %q", kind, v.Decision, v.Reasons)
		want := DecisionRescan
		if k.Blank {
			want = DecisionBlank
		}
		if v.Decision != want || (want == DecisionRescan && !strings.Contains(v.Reasons[0], "shape of text")) {
			t.Errorf("synth %s at 100 dpi: %s %q; want %s", kind, v.Decision, v.Reasons, want)
		}
	}

	dir := filepath.Join(ocrtest.RealPages(t), "leptonica")
	for _, c := range []struct {
		file string
		want string
	}{
		{"brev.56.75.jpg", DecisionRescan}, {"lapide.052.100.jpg", DecisionRescan}, {"pageseg2.tif", DecisionRescan},
		{"tribune-page-4x.png", DecisionRescan}, {"lucasta.150.jpg", DecisionRescan}, {"toc.99.tif", DecisionRescan},
		{"juditharismax.jpg", DecisionPicture}, {"test24.jpg", DecisionPicture}, {"fish24.jpg", DecisionPicture},
		{"wet-day.jpg", DecisionPicture}, {"lion-page.00010.jpg", DecisionPicture}, {"cavalerie.11.jpg", DecisionPicture},
	} {
		dec, err := ocr.DecodeFile(filepath.Join(dir, c.file), ocr.DecodeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		v := decide(dec.Image, dec.DPI)
		t.Logf("%s: %s %q", c.file, v.Decision, v.Reasons)
		if v.Decision != c.want {
			t.Errorf("%s: %s %q; want %s", c.file, v.Decision, v.Reasons, c.want)
		}
	}
}
