package report

import (
	"bytes"
	"html/template"
	"image"
	"image/png"
	"os"
	"path"
	"path/filepath"
	"strings"

	"golang.org/x/image/draw"

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
// grey (Catmull-Rom, golang.org/x/image/draw), and encodes it as PNG.
func thumbPNG(img image.Image) ([]byte, error) {
	b := img.Bounds()
	scale := min(float64(thumbW)/float64(b.Dx()), float64(thumbH)/float64(b.Dy()), 1)
	w, h := max(1, int(float64(b.Dx())*scale+0.5)), max(1, int(float64(b.Dy())*scale+0.5))
	dst := image.NewGray(image.Rect(0, 0, w, h))
	draw.CatmullRom.Scale(dst, dst.Bounds(), img, b, draw.Src, nil)
	var buf bytes.Buffer
	enc := png.Encoder{CompressionLevel: png.BestCompression}
	if err := enc.Encode(&buf, dst); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}
