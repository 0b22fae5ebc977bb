package ocr

import (
	"context"
	"image"
	"math"
	"time"
)

// Orienter is an Engine that can also tell which way up a page is. deg is
// how far the page's text is turned clockwise as seen (0, 90, 180 or
// 270); turning the page counter-clockwise by deg makes it upright. conf
// is the engine's confidence in it; ok is false when it could not decide.
// Process asks it when the engine has it (see processOriented).
type Orienter interface {
	Orientation(ctx context.Context, img *image.Gray, dpi int) (deg int, conf float64, ok bool, err error)
}

// MinOrientConfidence is the least orientation confidence (Tesseract's
// orientation and script detection) from which a page is turned upright.
// Measured on real scans (Tesseract 5.3.0 test data, Leptonica 1.82.0
// prog/): text pages upright or turned by 90°, 180° or 270° give 7.0 to
// 30.1 (phototest turned: 9.3 to 11.0; devatest-rotated-270 7.0),
// while a plate with a few words (lyra.036, 0.52) and a dark 75 dpi page
// (brev.06.75, 180° at 0.46, wrongly) are undecided; 5 lies between.
const MinOrientConfidence = 5.0

// Orientation records what orientation detection found on a page.
type Orientation struct {
	Degrees    int     `json:"degrees"`    // clockwise turn of the text found (0, 90, 180, 270)
	Confidence float64 `json:"confidence"` // the engine's confidence
	Decided    bool    `json:"decided"`    // confidence at least MinOrientConfidence: the page was read turned upright by Degrees
}

// turnCCW returns g turned counter-clockwise by q quarter turns (q in 0-3),
// exactly (no resampling).
func turnCCW(g *image.Gray, q int) *image.Gray {
	w, h := g.Rect.Dx(), g.Rect.Dy()
	q = ((q % 4) + 4) % 4
	dw, dh := w, h
	if q%2 == 1 {
		dw, dh = h, w
	}
	d := image.NewGray(image.Rect(0, 0, dw, dh))
	src := func(x, y int) uint8 { return g.Pix[(y)*g.Stride+x] }
	for y := 0; y < dh; y++ {
		row := d.Pix[y*d.Stride : y*d.Stride+dw]
		for x := range row {
			switch q {
			case 0:
				row[x] = src(x, y)
			case 1:
				row[x] = src(w-1-y, x)
			case 2:
				row[x] = src(w-1-x, h-1-y)
			case 3:
				row[x] = src(y, h-1-x)
			}
		}
	}
	return d
}

// unturnBox maps a box of a w×h page turned counter-clockwise by q quarter
// turns (turnCCW) back to the page's own pixels.
func unturnBox(b Box, q, w, h int) Box {
	switch ((q % 4) + 4) % 4 {
	case 1:
		return Box{X: w - (b.Y + b.H), Y: b.X, W: b.H, H: b.W}
	case 2:
		return Box{X: w - (b.X + b.W), Y: h - (b.Y + b.H), W: b.W, H: b.H}
	case 3:
		return Box{X: b.Y, Y: h - (b.X + b.W), W: b.H, H: b.W}
	}
	return b
}

// processOriented is Process with orientation detection (issue 11 part 3),
// for engines that have it (Orienter) and unless o.NoPrepare. With
// o.Orient Auto the page is read first as it is; only when the reading
// kept looks poor (ReadingLooksPoor, after the self-check: a turned page
// reads as a few unsure words both ways) is the orientation detected, so that
// upright pages, nearly all of a collection, cost nothing more. With On it
// is detected before every reading; Off never. A page found turned with
// confidence MinOrientConfidence or more is turned upright (exactly, by
// quarter turns) and read again from the start, preparation and
// self-check included; its word boxes are turned back to the page's own
// pixels. The record says what was found (Record.Orientation, also when
// the page was not turned or the engine could not decide), and the
// timings hold "orientation" and, for a page read again, the engine time
// of the first readings as "engine_unturned".
func processOriented(ctx context.Context, eng Engine, src image.Image, dpi float64, o Options) (*Record, *image.Gray, error) {
	or, ok := eng.(Orienter)
	if !ok || o.NoPrepare || o.Orient == Off {
		return process(ctx, eng, src, dpi, o)
	}
	var first *Record
	var firstImg *image.Gray
	if o.Orient != On {
		rec, img, err := process(ctx, eng, src, dpi, o)
		if err != nil || rec.Blank || !ReadingLooksPoor(rec.Words) {
			return rec, img, err
		}
		first, firstImg = rec, img
	}
	edpi := dpi
	if edpi <= 0 {
		edpi = o.dpi()
	}
	g := toGray(src)
	t := time.Now()
	deg, conf, decided, err := or.Orientation(ctx, g, int(math.Round(edpi)))
	took := ms(time.Since(t))
	if err != nil {
		return nil, nil, err
	}
	ori := &Orientation{Degrees: deg, Confidence: conf, Decided: decided && conf >= MinOrientConfidence}
	q := 0
	if ori.Decided {
		q = ((deg/90)%4 + 4) % 4
	}
	if q == 0 {
		if first == nil {
			if first, firstImg, err = process(ctx, eng, src, dpi, o); err != nil {
				return nil, nil, err
			}
		}
		first.Orientation = ori
		first.TimingsMS["orientation"] = took
		return first, firstImg, nil
	}
	rec, img, err := process(ctx, eng, turnCCW(g, q), dpi, o)
	if err != nil {
		return nil, nil, err
	}
	w, h := g.Rect.Dx(), g.Rect.Dy()
	for i := range rec.Words {
		rec.Words[i].Box = clip(unturnBox(rec.Words[i].Box, q, w, h), w, h)
	}
	rec.Width, rec.Height = w, h
	rec.Orientation = ori
	rec.TimingsMS["orientation"] = took
	if first != nil {
		rec.TimingsMS["engine_unturned"] = first.TimingsMS["engine"] + first.TimingsMS["engine_original"]
	}
	return rec, img, nil
}
