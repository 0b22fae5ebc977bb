package synth

import (
	"image"
	"math"
	"math/rand/v2"
)

// Degradation describes how a page is spoilt. The zero value leaves the
// page unchanged. Degrade applies the effects in the order a page meets
// them: the type (Bleed, Wear), the ink (Contrast), the placement on the
// scanner (Skew), the lighting (Light), the optics (Blur), the sensor
// (Scale, Noise) and dust or dropouts (SaltPepper).
type Degradation struct {
	Skew       float64 // rotation, degrees, counter-clockwise positive; corners filled white; |Skew| above 45 is clamped
	Blur       float64 // Gaussian blur, standard deviation in pixels of the input page; 0 none
	Noise      float64 // additive Gaussian noise, standard deviation in grey levels; 0 none
	SaltPepper float64 // fraction of pixels in [0, 1] set to pure black or white at random (half each)
	Light      float64 // uneven illumination in [0, 1]: the darkest corner of the paper is dimmed by this fraction, the opposite side by at most 15% of it (a mild vignette)
	Contrast   float64 // fading in [0, 1]: 0 unchanged, 0.5 halves the ink-to-paper contrast, 1 removes the ink
	Scale      float64 // resolution factor in (0, 1]: 0 or 1 unchanged, 0.5 halves width, height and DPI (area averaging)
	Wear       float64 // worn type in [0, 1]: fraction of the page area, in small random blobs, where ink is erased
	Bleed      float64 // ink spread in [0, 1]: 0 none, 1 strokes about twice as heavy and smeared
	Seed       uint64  // seed of every random choice; equal seeds give equal pixels
}

// Stream identifiers: each effect draws from its own PCG stream so that
// changing one effect's strength does not change another's randomness.
const (
	streamWear = iota + 1
	streamLight
	streamNoise
	streamSaltPepper
)

func clamp01(v float64) float64 { return math.Max(0, math.Min(1, v)) }

// Degrade returns a degraded copy of p; p is not modified. Values outside
// their documented ranges are clamped. Line and word boxes follow the skew
// (as bounding boxes of the rotated boxes) and the scale; DPI is multiplied
// by the scale.
func Degrade(p *Page, d Degradation) *Page {
	b := p.Image.Bounds()
	w, h := b.Dx(), b.Dy()
	buf := make([]float32, w*h)
	for y := 0; y < h; y++ {
		row := p.Image.Pix[y*p.Image.Stride : y*p.Image.Stride+w]
		o := buf[y*w : (y+1)*w]
		for x, v := range row {
			o[x] = float32(v)
		}
	}
	out := &Page{DPI: p.DPI, Truth: p.Truth, Lines: copyLines(p.Lines)}

	if v := clamp01(d.Bleed); v > 0 {
		bleed(buf, w, h, v)
	}
	if v := clamp01(d.Wear); v > 0 {
		wear(buf, w, h, v, rand.New(rand.NewPCG(d.Seed, streamWear)))
	}
	if v := clamp01(d.Contrast); v > 0 {
		k := float32(1 - v)
		for i, x := range buf {
			buf[i] = 255 - (255-x)*k
		}
	}
	if a := math.Max(-45, math.Min(45, d.Skew)); a != 0 {
		buf = rotate(buf, w, h, a)
		out.transformBoxes(func(x, y float64) (float64, float64) {
			return rotatePoint(x, y, float64(w)/2, float64(h)/2, a)
		})
	}
	if v := clamp01(d.Light); v > 0 {
		light(buf, w, h, v, rand.New(rand.NewPCG(d.Seed, streamLight)))
	}
	if d.Blur > 0 {
		gaussBlur(buf, w, h, d.Blur)
	}
	if s := d.Scale; s > 0 && s < 1 && w > 0 && h > 0 {
		nw, nh := max(1, int(math.Round(float64(w)*s))), max(1, int(math.Round(float64(h)*s)))
		buf = resample(buf, w, h, nw, nh)
		sx, sy := float64(nw)/float64(w), float64(nh)/float64(h)
		out.transformBoxes(func(x, y float64) (float64, float64) { return x * sx, y * sy })
		out.DPI *= sx
		w, h = nw, nh
	}
	if d.Noise > 0 {
		r := rand.New(rand.NewPCG(d.Seed, streamNoise))
		s := float32(d.Noise)
		for i := range buf {
			buf[i] += s * float32(r.NormFloat64())
		}
	}
	if v := clamp01(d.SaltPepper); v > 0 {
		r := rand.New(rand.NewPCG(d.Seed, streamSaltPepper))
		n := int(math.Round(v * float64(len(buf))))
		for range n {
			i := r.IntN(len(buf))
			if r.Uint64()&1 == 0 {
				buf[i] = 0
			} else {
				buf[i] = 255
			}
		}
	}

	img := image.NewGray(image.Rect(0, 0, w, h))
	for i, v := range buf {
		img.Pix[i] = uint8(math.Max(0, math.Min(255, math.Round(float64(v)))))
	}
	out.Image = img
	return out
}

func copyLines(ls []LineBox) []LineBox {
	if ls == nil {
		return nil
	}
	out := make([]LineBox, len(ls))
	for i, l := range ls {
		out[i] = l
		out[i].Words = append([]WordBox(nil), l.Words...)
	}
	return out
}

// transformBoxes replaces every box by the bounding box of its transformed corners.
func (p *Page) transformBoxes(f func(x, y float64) (float64, float64)) {
	tr := func(r image.Rectangle) image.Rectangle {
		minX, minY := math.Inf(1), math.Inf(1)
		maxX, maxY := math.Inf(-1), math.Inf(-1)
		for _, c := range [4][2]int{{r.Min.X, r.Min.Y}, {r.Max.X, r.Min.Y}, {r.Min.X, r.Max.Y}, {r.Max.X, r.Max.Y}} {
			x, y := f(float64(c[0]), float64(c[1]))
			minX, maxX = math.Min(minX, x), math.Max(maxX, x)
			minY, maxY = math.Min(minY, y), math.Max(maxY, y)
		}
		return image.Rect(int(math.Floor(minX)), int(math.Floor(minY)), int(math.Ceil(maxX)), int(math.Ceil(maxY)))
	}
	for i := range p.Lines {
		p.Lines[i].Box = tr(p.Lines[i].Box)
		for j := range p.Lines[i].Words {
			p.Lines[i].Words[j].Box = tr(p.Lines[i].Words[j].Box)
		}
	}
}

// rotatePoint turns (x, y) about (cx, cy) by deg degrees counter-clockwise
// as seen on the page (image y runs down).
func rotatePoint(x, y, cx, cy, deg float64) (float64, float64) {
	s, c := math.Sincos(deg * math.Pi / 180)
	dx, dy := x-cx, y-cy
	return cx + dx*c + dy*s, cy - dx*s + dy*c
}

// rotate returns buf turned by deg degrees counter-clockwise about the
// centre, same size, bilinear sampling, white outside the source.
func rotate(buf []float32, w, h int, deg float64) []float32 {
	out := make([]float32, w*h)
	s, c := math.Sincos(deg * math.Pi / 180)
	cx, cy := float64(w)/2, float64(h)/2
	for y := 0; y < h; y++ {
		// Inverse map: source = R(-deg) applied to the destination pixel centre.
		dy := float64(y) + 0.5 - cy
		for x := 0; x < w; x++ {
			dx := float64(x) + 0.5 - cx
			sx := cx + dx*c - dy*s - 0.5
			sy := cy + dx*s + dy*c - 0.5
			out[y*w+x] = bilinear(buf, w, h, sx, sy)
		}
	}
	return out
}

func bilinear(buf []float32, w, h int, x, y float64) float32 {
	x0, y0 := int(math.Floor(x)), int(math.Floor(y))
	fx, fy := float32(x-float64(x0)), float32(y-float64(y0))
	var a, b, c, d float32
	if x0 >= 0 && y0 >= 0 && x0+1 < w && y0+1 < h {
		i := y0*w + x0
		a, b, c, d = buf[i], buf[i+1], buf[i+w], buf[i+w+1]
	} else {
		if x0 < -1 || y0 < -1 || x0 >= w || y0 >= h {
			return 255
		}
		at := func(x, y int) float32 {
			if x < 0 || y < 0 || x >= w || y >= h {
				return 255
			}
			return buf[y*w+x]
		}
		a, b, c, d = at(x0, y0), at(x0+1, y0), at(x0, y0+1), at(x0+1, y0+1)
	}
	if a == b && c == d && a == c {
		return a // flat paper, the common case
	}
	top := a + (b-a)*fx
	bot := c + (d-c)*fx
	return top + (bot-top)*fy
}

// gaussBlur blurs buf in place with a separable Gaussian of standard
// deviation sigma pixels, extending the edges.
func gaussBlur(buf []float32, w, h int, sigma float64) {
	r := int(math.Ceil(3 * sigma))
	if r < 1 {
		return
	}
	k := make([]float32, 2*r+1)
	var sum float64
	for i := -r; i <= r; i++ {
		v := math.Exp(-float64(i*i) / (2 * sigma * sigma))
		k[i+r] = float32(v)
		sum += v
	}
	for i := range k {
		k[i] /= float32(sum)
	}
	// Rows.
	line := make([]float32, w+2*r)
	for y := 0; y < h; y++ {
		row := buf[y*w : (y+1)*w]
		for i := range line {
			line[i] = row[min(max(i-r, 0), w-1)]
		}
		for x := range row {
			var acc float32
			seg := line[x : x+2*r+1]
			for j, kv := range k {
				acc += kv * seg[j]
			}
			row[x] = acc
		}
	}
	// Columns, a row at a time for cache-friendly access.
	tmp := make([]float32, w*h)
	for y := 0; y < h; y++ {
		o := tmp[y*w : (y+1)*w]
		for j, kv := range k {
			sy := min(max(y+j-r, 0), h-1)
			src := buf[sy*w : (sy+1)*w]
			for x, v := range src {
				o[x] += kv * v
			}
		}
	}
	copy(buf, tmp)
}

// resample scales buf from w×h to nw×nh by area averaging (each output
// pixel is the mean of the input area it covers), rows then columns.
func resample(buf []float32, w, h, nw, nh int) []float32 {
	mid := make([]float32, nw*h)
	wx := coverage(w, nw)
	for y := 0; y < h; y++ {
		src := buf[y*w : (y+1)*w]
		dst := mid[y*nw : (y+1)*nw]
		for _, c := range wx {
			dst[c.dst] += c.wt * src[c.src]
		}
	}
	out := make([]float32, nw*nh)
	for _, c := range coverage(h, nh) {
		src := mid[c.src*nw : (c.src+1)*nw]
		dst := out[c.dst*nw : (c.dst+1)*nw]
		for x, v := range src {
			dst[x] += c.wt * v
		}
	}
	return out
}

type cover struct {
	src, dst int
	wt       float32
}

// coverage lists, for shrinking n samples to m, the weight each input
// sample contributes to each output sample (weights per output sum to 1).
func coverage(n, m int) []cover {
	var cs []cover
	scale := float64(n) / float64(m) // input samples per output sample
	for d := 0; d < m; d++ {
		lo, hi := float64(d)*scale, float64(d+1)*scale
		for s := int(math.Floor(lo)); s < n && float64(s) < hi; s++ {
			ov := math.Min(hi, float64(s+1)) - math.Max(lo, float64(s))
			if ov > 0 {
				cs = append(cs, cover{src: s, dst: d, wt: float32(ov / scale)})
			}
		}
	}
	return cs
}

// bleed spreads the ink: a light blur followed by a tone curve that
// darkens the grey fringe, so strokes thicken and their edges soften.
func bleed(buf []float32, w, h int, v float64) {
	gaussBlur(buf, w, h, 0.5+1.5*v)
	g := 1 + 5*v
	// The curve 255·(x/255)^g through a table with linear interpolation:
	// math.Pow per pixel cost most of Degrade's time.
	const steps = 1024
	var lut [steps + 1]float32
	for i := range lut {
		lut[i] = float32(255 * math.Pow(float64(i)/steps, g))
	}
	for i, x := range buf {
		f := min(max(x, 0), 255) * (steps / 255)
		j := min(int(f), steps-1)
		buf[i] = lut[j] + (lut[j+1]-lut[j])*(f-float32(j))
	}
}

// valueNoise fills a w×h field with smooth random values in about [0, 1]:
// two octaves of bilinearly interpolated random lattices of cell sizes
// cell and cell/2 pixels.
func valueNoise(w, h int, cell float64, r *rand.Rand) []float32 {
	out := make([]float32, w*h)
	octave := func(cell float64, weight float32) {
		gw, gh := int(float64(w)/cell)+2, int(float64(h)/cell)+2
		grid := make([]float32, gw*gh)
		for i := range grid {
			grid[i] = r.Float32()
		}
		for y := 0; y < h; y++ {
			gy := float64(y) / cell
			y0 := int(gy)
			fy := float32(smooth(gy - float64(y0)))
			for x := 0; x < w; x++ {
				gx := float64(x) / cell
				x0 := int(gx)
				fx := float32(smooth(gx - float64(x0)))
				a, b := grid[y0*gw+x0], grid[y0*gw+x0+1]
				c, d := grid[(y0+1)*gw+x0], grid[(y0+1)*gw+x0+1]
				top := a + (b-a)*fx
				out[y*w+x] += weight * (top + (c+(d-c)*fx-top)*fy)
			}
		}
	}
	octave(cell, 0.65)
	octave(cell/2, 0.35)
	return out
}

func smooth(t float64) float64 { return t * t * (3 - 2*t) }

// wear erases ink where a smooth random field falls below its v-quantile,
// so a fraction v of the page area, in blobs about a stroke wide, loses
// its ink; a narrow band at the blob edges is erased partly.
func wear(buf []float32, w, h int, v float64, r *rand.Rand) {
	n := valueNoise(w, h, 5, r)
	const bins = 1024
	var hist [bins]int
	for _, x := range n {
		hist[min(bins-1, max(0, int(x*bins)))]++
	}
	want := int(v * float64(len(n)))
	q := float32(1)
	acc := 0
	for i, c := range hist {
		acc += c
		if acc >= want {
			q = float32(i+1) / bins
			break
		}
	}
	const band = 0.02
	for i, x := range n {
		if x >= q+band {
			continue
		}
		k := float32(1) // fully erased
		if x > q-band {
			k = (q + band - x) / (2 * band)
		}
		buf[i] += (255 - buf[i]) * k
	}
}

// light dims the page by a smooth field: a gradient that is 0 on one side
// and 1 at the far corner along a random direction, eased, with a mild
// vignette; pixel values are multiplied by 1 - v·field.
func light(buf []float32, w, h int, v float64, r *rand.Rand) {
	theta := r.Float64() * 2 * math.Pi
	dx, dy := math.Cos(theta), math.Sin(theta)
	// Normalise the projection of the page corners onto (dx, dy) to [0, 1].
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, c := range [4][2]float64{{0, 0}, {float64(w), 0}, {0, float64(h)}, {float64(w), float64(h)}} {
		p := c[0]*dx + c[1]*dy
		lo, hi = math.Min(lo, p), math.Max(hi, p)
	}
	cx, cy := float64(w)/2, float64(h)/2
	rad2 := cx*cx + cy*cy
	for y := 0; y < h; y++ {
		fy := float64(y) + 0.5
		for x := 0; x < w; x++ {
			fx := float64(x) + 0.5
			g := (fx*dx + fy*dy - lo) / (hi - lo)
			g = g * g * (1.5 - 0.5*g) // eased: flat on the bright side, steep on the dark side
			vig2 := ((fx-cx)*(fx-cx) + (fy-cy)*(fy-cy)) / rad2
			f := 0.85*g + 0.15*vig2
			buf[y*w+x] *= float32(1 - v*f)
		}
	}
}
