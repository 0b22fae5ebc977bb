package ocr

// Temporary stand-in for the preparation API that the prep helper lands
// (decode*.go, prepare*.go). It converts to grey and does nothing else.
// Delete this file once theirs is merged.

import (
	"fmt"
	"image"
	"image/draw"
	_ "image/jpeg"
	_ "image/png"
	"os"
	"time"

	_ "golang.org/x/image/tiff"
)

// Mode switches a preparation step: Auto (the zero value), On or Off.
type Mode int

const (
	Auto Mode = iota
	On
	Off
)

// PrepOptions choose the preparation steps.
type PrepOptions struct {
	Denoise, Deskew, Cleanup Mode
	Binarize                 string
	MaxSkew                  float64
}

// Step is one preparation step as run.
type Step struct {
	Name     string
	Applied  bool
	Duration time.Duration
	Detail   string
}

// Prepared is a page ready for the engine.
type Prepared struct {
	Image        *image.Gray
	Skew         float64
	Binarization string
	Threshold    int
	Noise        float64
	Background   float64
	Blank        bool
	Steps        []Step
	ToOriginal   func(Box) Box
}

// Prepare converts src to grey (stand-in).
func Prepare(src image.Image, o PrepOptions) (*Prepared, error) {
	t := time.Now()
	g := image.NewGray(image.Rect(0, 0, src.Bounds().Dx(), src.Bounds().Dy()))
	draw.Draw(g, g.Bounds(), src, src.Bounds().Min, draw.Src)
	return &Prepared{
		Image: g, Binarization: "none",
		Steps:      []Step{{Name: "grey", Applied: true, Duration: time.Since(t)}},
		ToOriginal: func(b Box) Box { return b },
	}, nil
}

// DecodeOptions limit decoding.
type DecodeOptions struct{ MaxPixels int }

// Decoded is a decoded page image.
type Decoded struct {
	Image  image.Image
	DPI    float64
	Format string
}

// DecodeFile decodes a page image file (stand-in).
func DecodeFile(path string, o DecodeOptions) (*Decoded, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("ocr: %w", err)
	}
	defer f.Close()
	cfg, format, err := image.DecodeConfig(f)
	if err != nil {
		return nil, fmt.Errorf("ocr: %q: %w", path, err)
	}
	if o.MaxPixels > 0 && cfg.Width*cfg.Height > o.MaxPixels {
		return nil, fmt.Errorf("ocr: %q: %dx%d pixels is over the limit of %d", path, cfg.Width, cfg.Height, o.MaxPixels)
	}
	if _, err := f.Seek(0, 0); err != nil {
		return nil, fmt.Errorf("ocr: %q: %w", path, err)
	}
	img, _, err := image.Decode(f)
	if err != nil {
		return nil, fmt.Errorf("ocr: %q: %w", path, err)
	}
	return &Decoded{Image: img, Format: format}, nil
}
