package ocr

import (
	"image"
	"image/color"
	"image/draw"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/disintegration/imaging"
	"golang.org/x/image/font"
	"golang.org/x/image/font/gofont/goregular"
	"golang.org/x/image/font/opentype"
	"golang.org/x/image/math/fixed"
)

// The test pages are drawn here with the Go fonts, at a given resolution,
// with a fictional text. Degradations (noise, uneven light, skew) are added
// by the functions below; skew uses imaging.Rotate, an outside library, so
// the skew tests do not check our rotation against itself.

const pageText = `The council of Marrowby met on the second Tuesday of the month in the
long room above the old corn exchange, as it had done since the bridge
was rebuilt. Seven members were present and the clerk read the minutes
of the previous meeting, which were approved without amendment. The
question of the river wall was raised again by the member for Eastgate,
who reported that the stones near the ferry steps had moved during the
winter floods and that two lamps on the quay had been lost. The surveyor
was asked to inspect the wall before the end of the month and to report
the likely cost of repairs at the next meeting. A letter was received
from the headmistress of the Kiln Lane school asking for a new stove for
the lower classroom, the old one having cracked in January; the request
was granted, the sum not to exceed forty pounds. The librarian reported
that the reading room had lent three hundred and twelve volumes in the
quarter, that the roof over the map cupboard still leaked, and that the
gift of books from the late harbour master had been catalogued.`

var pageFace = func() *opentype.Font {
	f, err := opentype.Parse(goregular.TTF)
	if err != nil {
		panic(err)
	}
	return f
}()

// drawPage draws the lines of text in black on white on a page of w×h
// pixels at the given resolution, in a 11-point font, with margins of an
// inch. paper and ink are the grey levels used.
func drawPage(tb testing.TB, w, h int, dpi float64, text string, paper, ink uint8) *image.Gray {
	tb.Helper()
	face, err := opentype.NewFace(pageFace, &opentype.FaceOptions{Size: 11, DPI: dpi, Hinting: font.HintingNone})
	if err != nil {
		tb.Fatal(err)
	}
	defer face.Close()
	img := image.NewGray(image.Rect(0, 0, w, h))
	draw.Draw(img, img.Rect, image.NewUniform(color.Gray{paper}), image.Point{}, draw.Src)
	d := font.Drawer{Dst: img, Src: image.NewUniform(color.Gray{ink}), Face: face}
	lineH := int(math.Round(11 * 1.5 * dpi / 72))
	margin := int(dpi)
	y := margin + lineH
	for y < h-margin {
		for _, line := range strings.Split(text, "\n") {
			if y >= h-margin {
				break
			}
			d.Dot = fixed.P(margin, y)
			d.DrawString(line)
			y += lineH
		}
		y += lineH
	}
	return img
}

// a4 draws a full A4 page (8.27 × 11.69 in) at dpi.
func a4(tb testing.TB, dpi float64) *image.Gray {
	return drawPage(tb, int(8.27*dpi), int(11.69*dpi), dpi, pageText, 235, 30)
}

// addNoise adds zero-mean normal noise of standard deviation sigma.
func addNoise(g *image.Gray, sigma float64, seed uint64) {
	r := rand.New(rand.NewPCG(seed, 1))
	for i, v := range g.Pix {
		g.Pix[i] = clamp8(float64(v) + r.NormFloat64()*sigma)
	}
}

// unevenLight multiplies the page by an illumination falling linearly from 1
// at the left edge to low at the right edge (a book's gutter, a lamp to one side).
func unevenLight(g *image.Gray, low float64) {
	w, h := g.Rect.Dx(), g.Rect.Dy()
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			f := 1 - (1-low)*float64(x)/float64(w-1)
			g.Pix[y*g.Stride+x] = clamp8(float64(g.Pix[y*g.Stride+x]) * f)
		}
	}
}

// skewed rotates g counter-clockwise by deg with imaging.Rotate, white fill.
func skewed(g *image.Gray, deg float64) *image.Gray {
	return toGray(imaging.Rotate(g, deg, color.White))
}

func clamp8(v float64) uint8 {
	switch {
	case v < 0:
		return 0
	case v > 255:
		return 255
	}
	return uint8(math.Round(v))
}

// addSpeckle darkens a fraction of the pixels, chosen at random, to near
// black (dust, toner specks: impulse noise).
func addSpeckle(g *image.Gray, fraction float64, seed uint64) {
	r := rand.New(rand.NewPCG(seed, 2))
	for i := range g.Pix {
		if r.Float64() < fraction {
			g.Pix[i] = uint8(r.IntN(60))
		}
	}
}
