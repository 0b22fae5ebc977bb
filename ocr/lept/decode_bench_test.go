//go:build cgo && !notesseract

package lept

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"recto/ocr"
	"recto/ocr/ocrtest"
)

// BenchmarkTIFFDecode compares decoding the same TIFF through the pure-Go
// path (ocr.DecodeFile, ocr.PageFile) and through Leptonica (pixReadMem,
// pixReadTiff), issue 11: Leptonica must cost at most as much as the Go
// path. Files: Tesseract's real magazine scan 8087_054.3B.tif (bilevel,
// CCITT G4) and its greyscale twin 8087_054.3G.tif rewritten as 8-bit grey,
// LZW and uncompressed (ImageMagick), and page 50 of a 50-page TIFF of the
// LZW page (tiffcp). The reported figure is megapixels per second.
//
//	go test -run '^$' -bench BenchmarkTIFFDecode ./ocr/lept
func BenchmarkTIFFDecode(b *testing.B) {
	real := ocrtest.RealPages(b)
	dir := b.TempDir()
	g4 := filepath.Join(real, "tesseract", "8087_054.3B.tif")
	lzw := filepath.Join(dir, "lzw.tif")
	ocrtest.RunTool(b, "convert", filepath.Join(real, "tesseract", "8087_054.3G.tif"), "-depth", "8", "-compress", "lzw", lzw)
	raw := filepath.Join(dir, "none.tif")
	ocrtest.RunTool(b, "convert", filepath.Join(real, "tesseract", "8087_054.3G.tif"), "-depth", "8", "-compress", "none", raw)
	reel := filepath.Join(dir, "reel.tif")
	args := make([]string, 0, 51)
	for range 50 {
		args = append(args, lzw)
	}
	ocrtest.RunTool(b, "tiffcp", append(args, reel)...)

	var d decoder
	for _, f := range []struct{ name, path string }{{"G4", g4}, {"LZW", lzw}, {"none", raw}} {
		b.Run(f.name+"/go", func(b *testing.B) {
			var px int
			for b.Loop() {
				dec, err := ocr.DecodeFile(f.path, ocr.DecodeOptions{})
				if err != nil {
					b.Fatal(err)
				}
				px = dec.Image.Bounds().Dx() * dec.Image.Bounds().Dy()
			}
			b.ReportMetric(float64(px)*float64(b.N)/1e6/b.Elapsed().Seconds(), "Mpx/s")
		})
		b.Run(f.name+"/leptonica", func(b *testing.B) {
			var px int
			for b.Loop() {
				data, err := os.ReadFile(f.path)
				if err != nil {
					b.Fatal(err)
				}
				img, err := d.Decode(data)
				if err != nil {
					b.Fatal(err)
				}
				px = img.Bounds().Dx() * img.Bounds().Dy()
			}
			b.ReportMetric(float64(px)*float64(b.N)/1e6/b.Elapsed().Seconds(), "Mpx/s")
		})
	}
	b.Run("page50/go", func(b *testing.B) {
		ctx := context.Background()
		var px int
		for b.Loop() {
			pf, err := ocr.OpenPages(ctx, reel, ocr.DecodeOptions{})
			if err != nil {
				b.Fatal(err)
			}
			dec, err := pf.Page(ctx, 50)
			pf.Close()
			if err != nil {
				b.Fatal(err)
			}
			px = dec.Image.Bounds().Dx() * dec.Image.Bounds().Dy()
		}
		b.ReportMetric(float64(px)*float64(b.N)/1e6/b.Elapsed().Seconds(), "Mpx/s")
	})
	b.Run("page50/leptonica", func(b *testing.B) {
		var px int
		for b.Loop() {
			img, err := d.DecodeTIFFPage(reel, 49)
			if err != nil {
				b.Fatal(err)
			}
			px = img.Bounds().Dx() * img.Bounds().Dy()
		}
		b.ReportMetric(float64(px)*float64(b.N)/1e6/b.Elapsed().Seconds(), "Mpx/s")
	})
}
