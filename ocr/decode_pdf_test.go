package ocr_test

import (
	"bytes"
	"context"
	"errors"
	"image"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"recto/ocr"
	"recto/ocr/ocrtest"
)

// rgbSamples packs img as 8-bit RGB samples, as ImageMagick's `rgb:-`
// writes them.
func rgbSamples(img image.Image) []byte {
	b := img.Bounds()
	out := make([]byte, 0, 3*b.Dx()*b.Dy())
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			out = append(out, byte(r>>8), byte(g>>8), byte(bl>>8))
		}
	}
	return out
}

// TestPDFOfRealScans reads a PDF made from real scans the way a
// digitisation delivery wraps page images (img2pdf embeds each image
// without re-encoding: CCITT G4 for the bilevel TIFFs, Flate for the PNG;
// img2pdf's documentation, Josch, 2024): Tesseract 5.3.0's phototest.tif
// (200 dpi), eurotext.tif (300 dpi) and devatest.png (testdata/realpages
// /SOURCES.md). Every page must come back with the pixels ImageMagick reads
// from the source image (`convert SRC -depth 8 rgb:-`) and the resolution
// the PDF's page size gives (image width × 72 / page width in points, which
// img2pdf takes from the file's tag), as page n of 3 under the page names
// the README gives (reel/p0001 …).
func TestPDFOfRealScans(t *testing.T) {
	real := ocrtest.RealPages(t)
	tess := filepath.Join(real, "tesseract")
	srcs := []struct {
		file string
		dpi  float64
	}{{"phototest.tif", 200}, {"eurotext.tif", 300}, {"devatest.png", 300}}
	dir := t.TempDir()
	pdf := filepath.Join(dir, "reel.pdf")
	args := []string{}
	for _, s := range srcs {
		args = append(args, filepath.Join(tess, s.file))
	}
	ocrtest.RunTool(t, "img2pdf", append(args, "-o", pdf)...)
	before, err := os.ReadFile(pdf)
	if err != nil {
		t.Fatal(err)
	}

	ctx := context.Background()
	pf, err := ocr.OpenPages(ctx, pdf, ocr.DecodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer pf.Close()
	if pf.Pages() != len(srcs) || pf.Format != "pdf" {
		t.Fatalf("%d pages of %q, want %d of pdf", pf.Pages(), pf.Format, len(srcs))
	}
	for i, s := range srcs {
		n := i + 1
		d, err := pf.Page(ctx, n)
		if err != nil {
			t.Fatalf("page %d (%s): %v", n, s.file, err)
		}
		if d.Page != n || d.Pages != len(srcs) {
			t.Errorf("page %d says page %d of %d", n, d.Page, d.Pages)
		}
		if d.DPI != s.dpi {
			t.Errorf("page %d (%s): %v dpi, want %v", n, s.file, d.DPI, s.dpi)
		}
		want := ocrtest.RunTool(t, "convert", filepath.Join(tess, s.file), "-depth", "8", "rgb:-")
		if got := rgbSamples(d.Image); !bytes.Equal(got, want) {
			diff := 0
			for j := range min(len(got), len(want)) {
				if got[j] != want[j] {
					diff++
				}
			}
			t.Errorf("page %d (%s): %d of %d samples differ from ImageMagick's reading of the source (lengths %d, %d)",
				n, s.file, diff, len(want), len(got), len(want))
		}
	}
	if got := ocr.PageName("reel.pdf", 2, 3); got != "reel/p0002" {
		t.Errorf("PageName = %q, want reel/p0002", got)
	}
	after, err := os.ReadFile(pdf)
	if err != nil || !bytes.Equal(before, after) {
		t.Errorf("the PDF was changed by reading it (%v)", err)
	}
}

// TestPDFCorruptPageFailsAlone: a PDF whose second page's image data is
// damaged (its Flate stream overwritten in place, so that the file's
// cross-reference table stays valid) fails on that page only, with an error
// naming the page; the pages before and after it are read (issue 11, bad
// input).
func TestPDFCorruptPageFailsAlone(t *testing.T) {
	real := ocrtest.RealPages(t)
	tess := filepath.Join(real, "tesseract")
	dir := t.TempDir()
	pdf := filepath.Join(dir, "reel.pdf")
	dev := filepath.Join(tess, "devatest.png")
	ocrtest.RunTool(t, "img2pdf", filepath.Join(tess, "phototest.tif"), dev, filepath.Join(tess, "eurotext.tif"), "-o", pdf)
	data, err := os.ReadFile(pdf)
	if err != nil {
		t.Fatal(err)
	}
	// The Flate stream of the PNG page is the largest stream by far
	// (123 KB of 140 KB); overwrite its middle.
	best, bestLen := -1, 0
	for i := 0; ; {
		j := bytes.Index(data[i:], []byte("stream\n"))
		if j < 0 {
			break
		}
		start := i + j + len("stream\n")
		end := bytes.Index(data[start:], []byte("endstream"))
		if end < 0 {
			break
		}
		if end > bestLen {
			best, bestLen = start, end
		}
		i = start + end
	}
	if best < 0 || bestLen < 10000 {
		t.Fatalf("no large image stream found in the PDF img2pdf wrote")
	}
	for k := best + bestLen/4; k < best+3*bestLen/4; k++ {
		data[k] = byte(k * 31)
	}
	if err := os.WriteFile(pdf, data, 0o644); err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	pf, err := ocr.OpenPages(ctx, pdf, ocr.DecodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer pf.Close()
	if pf.Pages() != 3 {
		t.Fatalf("%d pages, want 3", pf.Pages())
	}
	for n := 1; n <= 3; n++ {
		d, err := pf.Page(ctx, n)
		if n == 2 {
			var de *ocr.DecodeError
			if err == nil {
				t.Errorf("page 2: read although its image data is damaged (%v)", d.Image.Bounds())
			} else if !errors.As(err, &de) || !strings.Contains(err.Error(), "page 2:") || !strings.Contains(err.Error(), "damaged") {
				t.Errorf("page 2: error %q does not name the page", err)
			}
			continue
		}
		if err != nil {
			t.Errorf("page %d: %v (a damaged page 2 must fail alone)", n, err)
		}
	}
}

// TestPDFDamageMessages: only errors of an image decoder fail a page;
// poppler's other syntax errors and its warnings leave the pixels intact.
// The flate message is the one pdfimages (poppler-utils 22.02, Debian
// bookworm) printed for TestPDFCorruptPageFailsAlone's file; the DCT,
// CCITTFax and cross-reference messages are from memory of poppler's
// Stream.cc and XRef.cc.
func TestPDFDamageMessages(t *testing.T) {
	for _, c := range []struct {
		stderr string
		damage bool
	}{
		{"Syntax Error (102322): Bad uncompressed block length in flate stream\n", true},
		{"Syntax Error (4511): Bad DCT header\n", true},
		{"Syntax Error (77): Bad 2D code 0000 in CCITTFax stream\n", true},
		{"Syntax Error: Couldn't find trailer dictionary\nSyntax Error: Couldn't read xref table\n", false},
		{"Syntax Warning: May not be a PDF file (continuing anyway)\n", false},
		{"", false},
	} {
		if got := ocr.DamagedData(c.stderr) != ""; got != c.damage {
			t.Errorf("DamagedData(%q) reports damage %v, want %v", c.stderr, got, c.damage)
		}
	}
}
