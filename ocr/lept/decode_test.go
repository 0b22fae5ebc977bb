//go:build cgo && !notesseract

package lept

import (
	"context"
	"fmt"
	"image"
	"image/color"
	"math"
	"path/filepath"
	"testing"

	"recto/ocr"
	"recto/ocr/ocrtest"
)

// magick returns ImageMagick 6's reading of path (page from 0) as packed
// 8-bit grey or RGB samples: `convert path[page] -depth 8 gray:-` (or
// rgb:-). ImageMagick is a reader independent of Leptonica and of Go.
func magick(t testing.TB, path string, page int, colour bool) []byte {
	t.Helper()
	out := "gray:-"
	if colour {
		out = "rgb:-"
	}
	return ocrtest.RunTool(t, "convert", fmt.Sprintf("%s[%d]", path, page), "-depth", "8", out)
}

// samples packs img as 8-bit grey (the Gray value, for a grey image) or
// RGB samples (colour images, alpha dropped) as the references give them.
func samples(img image.Image, colour bool) []byte {
	b := img.Bounds()
	var out []byte
	if g, ok := img.(*image.Gray); ok && !colour {
		for y := b.Min.Y; y < b.Max.Y; y++ {
			out = append(out, g.Pix[g.PixOffset(b.Min.X, y):g.PixOffset(b.Max.X, y)]...)
		}
		return out
	}
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			if !colour {
				out = append(out, color.GrayModel.Convert(img.At(x, y)).(color.Gray).Y)
				continue
			}
			c := color.NRGBAModel.Convert(img.At(x, y)).(color.NRGBA)
			out = append(out, c.R, c.G, c.B)
		}
	}
	return out
}

// differ counts samples that differ by more than tol, and the largest
// difference.
func differ(a, b []byte, tol int) (n, maxd int) {
	if len(a) != len(b) {
		return -1, -1
	}
	for i := range a {
		d := int(a[i]) - int(b[i])
		if d < 0 {
			d = -d
		}
		if d > tol {
			n++
		}
		maxd = max(maxd, d)
	}
	return n, maxd
}

// partitionDiffers counts the pixels where a and b do not map levels one
// to one: each level of b must go with a single level of a and back.
func partitionDiffers(a, b []byte) int {
	if len(a) != len(b) {
		return -1
	}
	var ab, ba [256]int
	for i := range ab {
		ab[i], ba[i] = -1, -1
	}
	n := 0
	for i := range a {
		x, y := a[i], b[i]
		if ab[x] < 0 && ba[y] < 0 {
			ab[x], ba[y] = int(y), int(x)
		}
		if ab[x] != int(y) || ba[y] != int(x) {
			n++
		}
	}
	return n
}

// variant is one kind of file: how it is made from a real scan, and
// whether package ocr's pure-Go decoders read it too.
type variant struct {
	name   string
	make   func(t *testing.T, dir string) string // returns the file to decode
	colour bool
	goToo  bool    // the pure-Go decoders read it (then Leptonica must agree with them)
	dpi    float64 // resolution the file declares; -1: do not check
	tol    int     // largest sample difference accepted against ImageMagick (lossy codecs decoded by other code)
	noLept bool    // Leptonica's reader refuses the file (1.82.0 reads no tiled TIFF)

	// sameLevels: ImageMagick gives the same pixels different grey
	// levels (see the 4-bit scan), so only the partition of the page into
	// levels is compared.
	sameLevels bool
}

func variants(real string) []variant {
	tess, lept := filepath.Join(real, "tesseract"), filepath.Join(real, "leptonica")
	crop := func(t *testing.T, dir, src string, args ...string) string {
		out := filepath.Join(dir, args[len(args)-1])
		geom := "600x400+200+600"
		if filepath.Base(src) == "phototest.tif" {
			geom = "600x400+20+40"
		}
		a := append([]string{src, "-crop", geom, "+repage"}, args[:len(args)-1]...)
		ocrtest.RunTool(t, "convert", append(a, out)...)
		return out
	}
	given := func(p string) func(*testing.T, string) string {
		return func(*testing.T, string) string { return p }
	}
	scan4 := filepath.Join(tess, "8087_054.3G.tif") // 4-bit grey magazine page, 300 dpi
	grey := filepath.Join(lept, "lucasta.047.jpg")  // 8-bit grey book page
	bilevel := filepath.Join(lept, "feyn.tif")      // CCITT G4 page of a book, 300 dpi
	tiffcp := func(opts ...string) func(*testing.T, string) string {
		return func(t *testing.T, dir string) string {
			out := filepath.Join(dir, "tiffcp.tif")
			ocrtest.RunTool(t, "tiffcp", append(opts, bilevel, out)...)
			return out
		}
	}
	return []variant{
		// The scan holds values 0 and 1 of 16 with BlackIsZero and a
		// ColorMap (0 black, 1 white), written by IrfanView. TIFF 6.0
		// (Adobe 1992, section 5) uses a ColorMap with Photometric 3
		// only; ImageMagick follows the photometric (levels 0 and 17:
		// the "near-black" page), Leptonica, and so Tesseract, the
		// colormap (0 and 255). recto reads what the engine reads.
		{name: "4-bit grey TIFF, real magazine scan", make: given(scan4), dpi: 300, sameLevels: true},
		{name: "4-bit grey TIFF", make: func(t *testing.T, d string) string {
			return crop(t, d, grey, "-depth", "4", "-density", "300", "-units", "PixelsPerInch", "g4.tif")
		}, dpi: 300},
		{name: "2-bit grey TIFF", make: func(t *testing.T, d string) string {
			return crop(t, d, grey, "-depth", "2", "-density", "300", "-units", "PixelsPerInch", "g2.tif")
		}, dpi: 300},
		{name: "CCITT G3 1-D with EOL codes", make: tiffcp("-c", "g3"), dpi: 300},
		{name: "CCITT G3 2-D with EOL codes and fill bits", make: tiffcp("-c", "g3:2d:fill"), dpi: 300},
		{name: "JPEG in TIFF, grey (GIMP)", make: given(filepath.Join(lept, "jpeg-coded.tif")), dpi: 72},
		{name: "old-style JPEG in TIFF (OJPEG tags), YCbCr", make: given(filepath.Join(lept, "testbuffer.tif")), colour: true, dpi: 96},
		{name: "tiled TIFF (256×256, LZW)", make: func(t *testing.T, d string) string {
			out := filepath.Join(d, "tiled.tif")
			ocrtest.RunTool(t, "tiffcp", "-c", "lzw", "-t", "-w", "256", "-l", "256", filepath.Join(tess, "8087_054.3B.tif"), out)
			return out
		}, goToo: true, dpi: 300, noLept: true},
		{name: "JPEG 2000 file (.jp2)", make: func(t *testing.T, d string) string { return crop(t, d, grey, "-depth", "8", "x.jp2") }, dpi: -1},
		{name: "JPEG 2000 codestream (.j2k)", make: func(t *testing.T, d string) string { return crop(t, d, grey, "-depth", "8", "x.j2k") }, dpi: -1},
		{name: "PGM (P5)", make: func(t *testing.T, d string) string { return crop(t, d, grey, "-depth", "8", "x.pgm") }, dpi: -1},
		{name: "PBM (P4)", make: func(t *testing.T, d string) string { return crop(t, d, bilevel, "x.pbm") }, dpi: -1},
		{name: "PPM (P6)", make: func(t *testing.T, d string) string {
			return crop(t, d, filepath.Join(tess, "phototest.tif"), "-type", "TrueColor", "-depth", "8", "x.ppm")
		}, colour: true, dpi: -1},
		{name: "GIF", make: func(t *testing.T, d string) string { return crop(t, d, grey, "-depth", "8", "x.gif") }, goToo: true, dpi: -1},
		{name: "WebP lossless", make: func(t *testing.T, d string) string {
			png := crop(t, d, filepath.Join(tess, "phototest.tif"), "-type", "TrueColor", "x.png")
			out := filepath.Join(d, "x.webp")
			ocrtest.RunTool(t, "cwebp", "-quiet", "-lossless", png, "-o", out)
			return out
		}, colour: true, goToo: true, dpi: -1},
		{name: "BMP with resolution", make: func(t *testing.T, d string) string {
			return crop(t, d, grey, "-depth", "8", "-type", "TrueColor", "-density", "300", "-units", "PixelsPerInch", "x.bmp")
		}, colour: true, goToo: true, dpi: 300},
	}
}

// TestDecodeVariants decodes each variant through package ocr with
// Leptonica registered and checks the pixels against two references:
// Leptonica's own reader and conversion (pixRead, pixConvertTo8/32,
// pixGetPixel; Leptonica 1.82.0, D. Bloomberg) and ImageMagick 6
// (`convert ... gray:-`/`rgb:-`, ImageMagick Studio). Where the pure-Go
// decoders read the file too, they are what ocr uses, and Leptonica must
// agree with them.
func TestDecodeVariants(t *testing.T) {
	if testing.Short() {
		t.Skip(longSequential)
	}
	real := ocrtest.RealPages(t)
	for _, v := range variants(real) {
		t.Run(v.name, func(t *testing.T) {
			path := v.make(t, t.TempDir())
			d, err := ocr.DecodeFile(path, ocr.DecodeOptions{})
			if err != nil {
				t.Fatal(err)
			}
			got := samples(d.Image, v.colour)
			b := d.Image.Bounds()
			if !v.noLept {
				w, h, ref, err := refPixels(path, 0, v.colour)
				if err != nil {
					t.Fatal(err)
				}
				if b.Dx() != w || b.Dy() != h {
					t.Fatalf("decoded %v, Leptonica's reader %d×%d", b, w, h)
				}
				if n, m := differ(got, ref, 0); n != 0 {
					t.Errorf("%d samples differ from Leptonica's own reader (largest difference %d)", n, m)
				}
			}
			im := magick(t, path, 0, v.colour)
			if v.sameLevels {
				if n := partitionDiffers(got, im); n != 0 {
					t.Errorf("%d pixels are split into levels differently from ImageMagick", n)
				}
			} else if n, m := differ(got, im, v.tol); n != 0 {
				t.Errorf("%d samples differ from ImageMagick by more than %d (largest %d)", n, v.tol, m)
			}
			if v.dpi >= 0 && math.Abs(d.DPI-v.dpi) > 0.05 {
				t.Errorf("resolution %.2f dpi, the file says %.2f (ImageMagick identify %%x)", d.DPI, v.dpi)
			}
			t.Logf("%s: %d×%d, %s, %.0f dpi", filepath.Base(path), b.Dx(), b.Dy(), d.Format, d.DPI)
		})
	}
}

// TestMultiPageTIFFThroughLeptonica reads a three-page TIFF whose pages
// the pure-Go decoder refuses (4-bit grey, CCITT G3 with EOL codes) or
// reads (8-bit grey), page by page, each against ImageMagick.
func TestMultiPageTIFFThroughLeptonica(t *testing.T) {
	real := ocrtest.RealPages(t)
	dir := t.TempDir()
	scan4 := filepath.Join(real, "tesseract", "8087_054.3G.tif")
	p4 := filepath.Join(dir, "p4.tif")
	ocrtest.RunTool(t, "convert", scan4, "-crop", "600x400+700+900", "+repage", "-depth", "4", p4)
	g3 := filepath.Join(dir, "g3.tif")
	ocrtest.RunTool(t, "tiffcp", "-c", "g3", filepath.Join(real, "leptonica", "feyn.tif"), g3)
	p8 := filepath.Join(dir, "p8.tif")
	ocrtest.RunTool(t, "convert", scan4, "-crop", "500x300+100+100", "+repage", "-depth", "8", p8)
	reel := filepath.Join(dir, "reel.tif")
	ocrtest.RunTool(t, "tiffcp", p4, g3, p8, reel)

	ctx := context.Background()
	pf, err := ocr.OpenPages(ctx, reel, ocr.DecodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer pf.Close()
	if pf.Pages() != 3 {
		t.Fatalf("%d pages, want 3 (tiffcp wrote three)", pf.Pages())
	}
	for n := 1; n <= 3; n++ {
		d, err := pf.Page(ctx, n)
		if err != nil {
			t.Fatalf("page %d: %v", n, err)
		}
		if d.Page != n || d.Pages != 3 {
			t.Errorf("page %d says page %d of %d", n, d.Page, d.Pages)
		}
		if c, m := differ(samples(d.Image, false), magick(t, reel, n-1, false), 0); c != 0 {
			t.Errorf("page %d: %d samples differ from ImageMagick (largest %d)", n, c, m)
		}
	}
}

// longSequential is the reason long single-threaded checks give for
// skipping under -short: scripts/test runs the race detector with -short
// (it makes image work about ten times slower and finds nothing in code
// without goroutines), then the whole suite without it.
const longSequential = "long sequential image work: runs in the pass of scripts/test without -short and the race detector"
