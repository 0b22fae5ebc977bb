package report

import (
	"bytes"
	"html/template"
	"image"
	"image/draw"
	"image/png"
	"os"
	"path"
	"path/filepath"
	"strings"
	"sync"

	"github.com/disintegration/imaging"

	"recto/internal/atomicfile"
)

// Thumbnails are kept in the report folder, so that the report opens
// offline and a rebuilt report (recto report) reuses them.
const (
	thumbDir = "thumbs"
	thumbW   = 96  // pixels: at most this wide
	thumbH   = 136 // and this high (an A4 page at 96 px wide)
)

// thumbnail returns the link to p's thumbnail in dir, making it from
// image(p) when it is not there yet; "" when p has no ThumbKey or its
// image cannot be had. A thumbnail is never made twice: its name holds the
// key, which changes with the image.
func thumbnail(dir string, p Page, get func(Page) (image.Image, error)) template.URL {
	key := p.ThumbKey
	if key == "" || strings.Trim(key, "0123456789abcdefghijklmnopqrstuvwxyz-") != "" {
		return ""
	}
	name := path.Join(thumbDir, key+".png")
	file := filepath.Join(dir, filepath.FromSlash(name))
	if _, err := os.Stat(file); err == nil {
		return template.URL("./" + name)
	}
	if get == nil {
		return ""
	}
	img, err := get(p)
	if err != nil || img == nil || img.Bounds().Empty() {
		return ""
	}
	data, err := thumbPNG(img)
	if err != nil {
		return ""
	}
	if err := os.MkdirAll(filepath.Dir(file), 0o755); err != nil {
		return ""
	}
	if err := atomicfile.Write(file, data); err != nil {
		return ""
	}
	return template.URL("./" + name)
}

// thumbPNG scales img to fit thumbW × thumbH, keeping its proportions, in
// grey (Shrink's area average), and encodes it as PNG.
func thumbPNG(img image.Image) ([]byte, error) {
	b := img.Bounds()
	scale := min(float64(thumbW)/float64(b.Dx()), float64(thumbH)/float64(b.Dy()), 1)
	w, h := max(1, int(float64(b.Dx())*scale+0.5)), max(1, int(float64(b.Dy())*scale+0.5))
	small := Shrink(img, w, h)
	g, ok := small.(*image.Gray)
	if !ok || g.Rect.Min != (image.Point{}) {
		g = image.NewGray(image.Rect(0, 0, w, h))
		draw.Draw(g, g.Rect, small, small.Bounds().Min, draw.Src)
	}
	var buf bytes.Buffer
	enc := png.Encoder{CompressionLevel: png.BestCompression, BufferPool: thumbBuffers}
	if err := enc.Encode(&buf, g); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// thumbBuffers lets the PNG encoder of one thumbnail reuse the compressor
// of an earlier one (about 1 MB each at BestCompression).
var thumbBuffers = &pngBuffers{}

type pngBuffers struct{ pool sync.Pool }

func (p *pngBuffers) Get() *png.EncoderBuffer {
	b, _ := p.pool.Get().(*png.EncoderBuffer)
	return b
}

func (p *pngBuffers) Put(b *png.EncoderBuffer) { p.pool.Put(b) }

// Shrink scales img down to w×h, each target pixel the mean of the source
// pixels it covers (a box filter, the area average). A greyscale image,
// nearly every scan, is averaged in one pass (shrinkGray) and stays
// greyscale; any other image goes through imaging's box filter
// (github.com/disintegration/imaging) and comes back as NRGBA. An image
// already no larger than w×h in both directions is returned as it is.
// The report's thumbnails and recto review's thumbnails and page images
// are made with it.
func Shrink(img image.Image, w, h int) image.Image {
	b := img.Bounds()
	if b.Dx() <= w && b.Dy() <= h {
		return img
	}
	g, ok := img.(*image.Gray)
	if !ok || g.Rect.Min != (image.Point{}) || b.Dx() < w || b.Dy() < h {
		return imaging.Resize(img, w, h, imaging.Box)
	}
	return shrinkGray(g, w, h)
}

// shrinkGray is the area average of g at w×h (no larger than g): target
// column x covers source columns [x·W/w, (x+1)·W/w), likewise for rows.
// Each source row is added into per-column sums in one pass (col maps a
// source column to its target column), so the work is one addition per
// source pixel.
func shrinkGray(g *image.Gray, w, h int) *image.Gray {
	sw, sh := g.Rect.Dx(), g.Rect.Dy()
	out := image.NewGray(image.Rect(0, 0, w, h))
	col := make([]int32, sw)
	span := make([]uint32, w) // source columns per target column
	for x := 0; x < w; x++ {
		x0, x1 := x*sw/w, (x+1)*sw/w
		for sx := x0; sx < x1; sx++ {
			col[sx] = int32(x)
		}
		span[x] = uint32(x1 - x0)
	}
	sums := make([]uint32, w)
	for y := 0; y < h; y++ {
		y0, y1 := y*sh/h, (y+1)*sh/h
		clear(sums)
		for sy := y0; sy < y1; sy++ {
			row := g.Pix[sy*g.Stride : sy*g.Stride+sw]
			for sx, v := range row {
				sums[col[sx]] += uint32(v)
			}
		}
		dst := out.Pix[y*out.Stride : y*out.Stride+w]
		rows := uint32(y1 - y0)
		for x := range dst {
			n := span[x] * rows
			dst[x] = uint8((sums[x] + n/2) / n)
		}
	}
	return out
}
