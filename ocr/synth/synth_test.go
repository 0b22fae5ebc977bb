package synth

import (
	"bytes"
	"encoding/binary"
	"image"
	"image/png"
	"math"
	"slices"
	"strings"
	"testing"
)

const sample = "The harbour at Wenlow Cross froze on 3 January 1881, and the “Curlew” lay iced in for nine days — the longest on record.\n\n" +
	"Mr Tobin Garsey, clerk to the Fenwater Board, counted 412 barrels, 37 crates and one piano on the quay; the piano was never claimed. " +
	"Supplies came overland from Ashby Marrow at 4s. 6d. the cart-load."

var small = Layout{WidthMM: 100, HeightMM: 90, MarginMM: 8}

// tiny keeps the degradation tests fast under the race detector.
var tiny = Layout{WidthMM: 70, HeightMM: 45, MarginMM: 4, DPI: 200, FontSizePt: 10}

func mustRender(t testing.TB, text string, l Layout) *Page {
	t.Helper()
	p, _, err := Render(text, l)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func TestRenderTruthHasTheWords(t *testing.T) {
	p, rest, err := Render(sample, small)
	if err != nil {
		t.Fatal(err)
	}
	if rest != "" {
		t.Fatalf("rest = %q, want everything to fit", rest)
	}
	if got, want := strings.Fields(p.Truth), strings.Fields(sample); !slices.Equal(got, want) {
		t.Errorf("truth words = %q\nwant %q", got, want)
	}
	if !strings.Contains(p.Truth, "\n\n") || strings.Count(p.Truth, "\n\n") != 1 {
		t.Errorf("truth %q should hold exactly one paragraph break", p.Truth)
	}
	var lines []string
	for _, l := range strings.Split(p.Truth, "\n") {
		if l != "" {
			lines = append(lines, l)
		}
	}
	if len(lines) != len(p.Lines) {
		t.Fatalf("%d truth lines, %d line boxes", len(lines), len(p.Lines))
	}
	img := p.Image
	for i, lb := range p.Lines {
		if lb.Text != lines[i] {
			t.Errorf("line %d: box text %q, truth %q", i, lb.Text, lines[i])
		}
		for j, wb := range lb.Words {
			// Every word box holds ink ...
			if ink(img, wb.Box) == 0 {
				t.Errorf("line %d word %q: no ink in %v", i, wb.Text, wb.Box)
			}
			// ... and the gap to the next word holds none: the words are
			// drawn where the boxes say, separated as the truth says.
			if j+1 < len(lb.Words) {
				gap := image.Rect(wb.Box.Max.X+1, wb.Box.Min.Y, lb.Words[j+1].Box.Min.X-1, wb.Box.Max.Y)
				if !gap.Empty() && ink(img, gap) > 0 {
					t.Errorf("line %d: ink between %q and %q in %v", i, wb.Text, lb.Words[j+1].Text, gap)
				}
			}
		}
	}
	// No ink outside the line boxes.
	total := ink(img, img.Bounds())
	var inBoxes int
	for _, lb := range p.Lines {
		inBoxes += ink(img, lb.Box)
	}
	if inBoxes != total {
		t.Errorf("ink outside line boxes: %d of %d dark pixels", total-inBoxes, total)
	}
}

// ink counts pixels darker than mid-grey in r.
func ink(img *image.Gray, r image.Rectangle) int {
	r = r.Intersect(img.Bounds())
	n := 0
	for y := r.Min.Y; y < r.Max.Y; y++ {
		for x := r.Min.X; x < r.Max.X; x++ {
			if img.GrayAt(x, y).Y < 128 {
				n++
			}
		}
	}
	return n
}

func TestRenderOverflow(t *testing.T) {
	long := strings.Repeat(sample+"\n\n", 6)
	p, rest, err := Render(long, small)
	if err != nil {
		t.Fatal(err)
	}
	if rest == "" {
		t.Fatal("six samples should not fit a 100x90 mm page")
	}
	got := append(strings.Fields(p.Truth), strings.Fields(rest)...)
	if want := strings.Fields(long); !slices.Equal(got, want) {
		t.Errorf("truth + rest lost or reordered words")
	}
	last := p.Lines[len(p.Lines)-1].Box
	if bottom := p.Image.Bounds().Dy() - int(math.Round(8/25.4*300)); last.Max.Y > bottom {
		t.Errorf("last line ends at %d, below the margin at %d", last.Max.Y, bottom)
	}
}

func TestRenderLongWordIsBroken(t *testing.T) {
	word := strings.Repeat("abcdefghij", 30)
	p, rest, err := Render(word, small)
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(strings.Fields(p.Truth), "") + rest; got != word {
		t.Errorf("broken word does not rebuild the input: %q", got)
	}
	if len(p.Lines) < 2 {
		t.Errorf("a 300-letter word should take several lines, took %d", len(p.Lines))
	}
}

func TestRenderEmptyAndErrors(t *testing.T) {
	for _, text := range []string{"", "   \n\n\t\n"} {
		p, rest, err := Render(text, tiny)
		if err != nil || rest != "" || p.Truth != "" || len(p.Lines) != 0 {
			t.Errorf("Render(%q) = truth %q, rest %q, err %v", text, p.Truth, rest, err)
			continue
		}
		if n := ink(p.Image, p.Image.Bounds()); n != 0 {
			t.Errorf("Render(%q): %d dark pixels on an empty page", text, n)
		}
		_ = Degrade(p, Degradation{Skew: 3, Blur: 1, Noise: 5, SaltPepper: 0.1, Light: 0.5, Contrast: 0.3, Scale: 0.5, Wear: 0.3, Bleed: 0.5, Seed: 1}) // must not panic
	}
	for _, tc := range []struct {
		name string
		l    Layout
	}{
		{"unknown font", Layout{Font: "gothic"}},
		{"margins eat the page", Layout{WidthMM: 30, HeightMM: 30, MarginMM: 15}},
		{"negative size", Layout{WidthMM: -5}},
	} {
		if p, _, err := Render("x", tc.l); err == nil || p != nil {
			t.Errorf("%s: Render = %v, %v; want nil page and an error", tc.name, p, err)
		}
	}
}

func TestRenderFonts(t *testing.T) {
	for _, f := range Fonts() {
		p, _, err := Render("Quay Street 1881", Layout{WidthMM: 80, HeightMM: 20, MarginMM: 3, Font: f})
		if err != nil {
			t.Fatalf("font %q: %v", f, err)
		}
		if ink(p.Image, p.Image.Bounds()) == 0 {
			t.Errorf("font %q drew nothing", f)
		}
	}
}

func TestDeterminism(t *testing.T) {
	p := mustRender(t, sample, tiny)
	d := Level(0.7, 42)
	a, b := Degrade(p, d), Degrade(p, d)
	if !bytes.Equal(a.Image.Pix, b.Image.Pix) {
		t.Error("same seed gave different pixels")
	}
	d.Seed = 43
	if c := Degrade(p, d); bytes.Equal(a.Image.Pix, c.Image.Pix) {
		t.Error("different seeds gave the same pixels")
	}
	q := mustRender(t, sample, tiny)
	if !bytes.Equal(p.Image.Pix, q.Image.Pix) {
		t.Error("Render is not deterministic")
	}
}

func TestDegradeLeavesInputAlone(t *testing.T) {
	p := mustRender(t, sample, tiny)
	before := bytes.Clone(p.Image.Pix)
	box := p.Lines[0].Box
	_ = Degrade(p, Degradation{Skew: 3, Noise: 20, Scale: 0.5, Seed: 1})
	if !bytes.Equal(before, p.Image.Pix) || p.Lines[0].Box != box {
		t.Error("Degrade modified its input page")
	}
	if z := Degrade(p, Degradation{Seed: 9}); !bytes.Equal(z.Image.Pix, p.Image.Pix) {
		t.Error("the zero Degradation changed pixels")
	}
}

// inkAngle returns the direction of the principal axis of the ink
// (pixels darker than mid-grey, weighted by darkness) in degrees,
// counter-clockwise positive on the page (image y runs down): half the
// angle atan2(2·cov(x,y), var(x)−var(y)) of the second central moments,
// the orientation of a blob in image-moment analysis (common practice;
// e.g. Jähne, Digital Image Processing, 2005, moments chapter, from memory).
func inkAngle(img *image.Gray) float64 {
	var sw, sx, sy, sxx, syy, sxy float64
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			w := float64(255-img.GrayAt(x, y).Y) / 255
			if w < 0.5 {
				continue
			}
			fx, fy := float64(x), float64(y)
			sw += w
			sx += w * fx
			sy += w * fy
			sxx += w * fx * fx
			syy += w * fy * fy
			sxy += w * fx * fy
		}
	}
	mx, my := sx/sw, sy/sw
	vx, vy, cxy := sxx/sw-mx*mx, syy/sw-my*my, sxy/sw-mx*my
	return -0.5 * math.Atan2(2*cxy, vx-vy) * 180 / math.Pi
}

func TestSkewMatchesRequest(t *testing.T) {
	// A rule of em dashes: a long thin bar whose ink axis is the baseline.
	rule := mustRender(t, strings.Repeat("—", 25), Layout{WidthMM: 120, HeightMM: 30, MarginMM: 5, FontSizePt: 12, DPI: 200})
	if len(rule.Lines) != 1 {
		t.Fatalf("the rule takes %d lines, want 1", len(rule.Lines))
	}
	if a := inkAngle(rule.Image); math.Abs(a) > 0.02 {
		t.Fatalf("unskewed rule measures %.3f°", a)
	}
	for _, want := range []float64{-5, -1.5, 0.7, 3, 8} {
		got := inkAngle(Degrade(rule, Degradation{Skew: want, Seed: 1}).Image)
		if math.Abs(got-want) > 0.05 {
			t.Errorf("Skew %.2f°: measured %.3f°", want, got)
		}
	}
	// Line boxes follow: the rotated first line's box still holds its ink.
	p := mustRender(t, sample, tiny)
	q := Degrade(p, Degradation{Skew: 4, Seed: 1})
	if n, m := ink(q.Image, q.Lines[0].Box), ink(p.Image, p.Lines[0].Box); float64(n) < 0.95*float64(m) {
		t.Errorf("rotated first-line box holds %d dark pixels, unrotated %d", n, m)
	}
}

func grey(w, h int, v uint8) *Page {
	img := image.NewGray(image.Rect(0, 0, w, h))
	for i := range img.Pix {
		img.Pix[i] = v
	}
	return &Page{Image: img, DPI: 300}
}

func meanStd(img *image.Gray, r image.Rectangle) (float64, float64) {
	var s, ss, n float64
	for y := r.Min.Y; y < r.Max.Y; y++ {
		for x := r.Min.X; x < r.Max.X; x++ {
			v := float64(img.GrayAt(x, y).Y)
			s += v
			ss += v * v
			n++
		}
	}
	m := s / n
	return m, math.Sqrt(ss/n - m*m)
}

func TestNoiseSigma(t *testing.T) {
	for _, sigma := range []float64{5, 20, 40} {
		q := Degrade(grey(400, 400, 128), Degradation{Noise: sigma, Seed: 5})
		m, s := meanStd(q.Image, q.Image.Bounds())
		// 160 000 samples: the sample standard deviation is within 1% of
		// sigma with overwhelming probability; rounding to integers adds
		// variance 1/12 (sampling theory, common practice).
		want := math.Sqrt(sigma*sigma + 1.0/12)
		if math.Abs(s-want) > 0.02*want || math.Abs(m-128) > 0.5 {
			t.Errorf("Noise %.0f: mean %.2f, std %.2f; want 128, %.2f", sigma, m, s, want)
		}
	}
}

func TestBlurSigma(t *testing.T) {
	// A vertical step edge blurred by a Gaussian of standard deviation σ
	// rises from 10% to 90% over 2·1.2816σ, the normal distribution's
	// 10% and 90% quantiles (any statistics table).
	p := grey(200, 40, 255)
	for y := 0; y < 40; y++ {
		for x := 0; x < 100; x++ {
			p.Image.Pix[y*p.Image.Stride+x] = 0
		}
	}
	for _, sigma := range []float64{1.5, 3, 6} {
		q := Degrade(p, Degradation{Blur: sigma})
		row := q.Image.Pix[20*q.Image.Stride : 20*q.Image.Stride+200]
		cross := func(level float64) float64 {
			for x := 1; x < len(row); x++ {
				a, b := float64(row[x-1]), float64(row[x])
				if a < level && b >= level {
					return float64(x-1) + (level-a)/(b-a)
				}
			}
			return math.NaN()
		}
		got := cross(0.9*255) - cross(0.1*255)
		want := 2 * 1.2816 * sigma
		if math.Abs(got-want) > 0.1*want+0.3 {
			t.Errorf("Blur %.1f: 10–90%% rise over %.2f px, want %.2f", sigma, got, want)
		}
	}
}

func TestContrast(t *testing.T) {
	p := mustRender(t, sample, small)
	q := Degrade(p, Degradation{Contrast: 0.5})
	minV := uint8(255)
	maxV := uint8(0)
	for _, v := range q.Image.Pix {
		minV, maxV = min(minV, v), max(maxV, v)
	}
	if maxV != 255 || minV < 127 || minV > 128 {
		t.Errorf("Contrast 0.5: grey range %d..%d, want 127 or 128..255", minV, maxV)
	}
}

func TestScale(t *testing.T) {
	p := mustRender(t, sample, small)
	q := Degrade(p, Degradation{Scale: 0.5})
	b, c := p.Image.Bounds(), q.Image.Bounds()
	if math.Abs(float64(c.Dx())-float64(b.Dx())/2) > 0.5 || math.Abs(float64(c.Dy())-float64(b.Dy())/2) > 0.5 {
		t.Errorf("Scale 0.5: %v from %v", c, b)
	}
	if math.Abs(q.DPI-150) > 0.2 {
		t.Errorf("Scale 0.5: DPI %.2f, want 150", q.DPI)
	}
	// Area averaging keeps the mean grey level.
	m0, _ := meanStd(p.Image, b)
	m1, _ := meanStd(q.Image, c)
	if math.Abs(m0-m1) > 0.5 {
		t.Errorf("Scale 0.5: mean grey %.2f, was %.2f", m1, m0)
	}
	if ink(q.Image, q.Lines[0].Box) == 0 {
		t.Error("scaled line box holds no ink")
	}
}

func TestSaltPepper(t *testing.T) {
	q := Degrade(grey(500, 500, 128), Degradation{SaltPepper: 0.1, Seed: 3})
	var black, white int
	for _, v := range q.Image.Pix {
		switch v {
		case 0:
			black++
		case 255:
			white++
		}
	}
	n := 500.0 * 500
	// 25 000 random picks with replacement hit 1-exp(-0.1) ≈ 9.5% of pixels.
	want := n * (1 - math.Exp(-0.1)) / 2
	for _, got := range []int{black, white} {
		if math.Abs(float64(got)-want) > 0.05*want {
			t.Errorf("SaltPepper 0.1: %d black, %d white, want about %.0f each", black, white, want)
		}
	}
}

func TestLight(t *testing.T) {
	q := Degrade(grey(300, 400, 255), Degradation{Light: 0.7, Seed: 11})
	lo, hi := 255.0, 0.0
	for y := 0; y < 400; y++ {
		for x := 0; x < 300; x++ {
			v := float64(q.Image.GrayAt(x, y).Y)
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	// The darkest corner is dimmed by about 70%, the bright side barely.
	if lo > 255*0.35 || hi < 235 {
		t.Errorf("Light 0.7: paper ranges %.0f..%.0f, want a corner near %.0f and a side near 255", lo, hi, 255*0.3)
	}
}

func TestWearErasesFraction(t *testing.T) {
	p := mustRender(t, strings.Repeat(sample+" ", 2), Layout{WidthMM: 110, HeightMM: 80, MarginMM: 5, DPI: 200, FontSizePt: 10, Font: "bold"})
	before := ink(p.Image, p.Image.Bounds())
	for _, w := range []float64{0.1, 0.3, 0.6} {
		after := ink(Degrade(p, Degradation{Wear: w, Seed: 2}).Image, p.Image.Bounds())
		lost := 1 - float64(after)/float64(before)
		if math.Abs(lost-w) > 0.06 {
			t.Errorf("Wear %.1f: %.3f of the ink erased", w, lost)
		}
	}
}

func TestBleedThickens(t *testing.T) {
	p := mustRender(t, sample, tiny)
	before := ink(p.Image, p.Image.Bounds())
	prev := before
	for _, b := range []float64{0.3, 0.6, 1} {
		n := ink(Degrade(p, Degradation{Bleed: b}).Image, p.Image.Bounds())
		if n <= prev {
			t.Errorf("Bleed %.1f: %d dark pixels, not more than %d", b, n, prev)
		}
		prev = n
	}
	if float64(prev) < 1.6*float64(before) || float64(prev) > 3*float64(before) {
		t.Errorf("Bleed 1: %d dark pixels from %d, want strokes about twice as heavy", prev, before)
	}
}

func TestKinds(t *testing.T) {
	seen := map[string]bool{}
	for _, k := range Kinds() {
		if seen[k.Name] {
			t.Errorf("duplicate kind %q", k.Name)
		}
		seen[k.Name] = true
		text := sample
		if k.Blank {
			text = ""
		}
		d := k.D
		d.Seed = 1
		q := Degrade(mustRender(t, text, tiny), d)
		if n := ink(q.Image, q.Image.Bounds()); k.Blank && n > 0 {
			t.Errorf("kind %q: %d dark pixels on a blank page", k.Name, n)
		}
		// Even faded ink stays well below the paper.
		if n := darker(q.Image, 200); !k.Blank && n < 300 {
			t.Errorf("kind %q: only %d pixels darker than 200", k.Name, n)
		}
	}
	for _, name := range []string{"clean", "lowres", "skewed", "noisy", "uneven", "blank", "worn", "faded"} {
		if _, ok := KindByName(name); !ok {
			t.Errorf("missing kind %q", name)
		}
	}
}

func darker(img *image.Gray, level uint8) int {
	n := 0
	for _, v := range img.Pix {
		if v < level {
			n++
		}
	}
	return n
}

func TestLevel(t *testing.T) {
	if d := Level(0, 5); d != (Degradation{Seed: 5}) {
		t.Errorf("Level(0) = %+v, want clean", d)
	}
	for seed := uint64(0); seed < 20; seed++ {
		a, b := Level(0.3, seed), Level(0.8, seed)
		if math.Abs(b.Skew) < math.Abs(a.Skew) || b.Blur < a.Blur || b.Noise < a.Noise || b.Light < a.Light ||
			b.Contrast < a.Contrast || b.Scale > a.Scale || b.Wear < a.Wear || b.Bleed < a.Bleed || b.SaltPepper < a.SaltPepper {
			t.Errorf("seed %d: Level(0.8) = %+v is milder than Level(0.3) = %+v in some effect", seed, b, a)
		}
		if a != Level(0.3, seed) {
			t.Errorf("seed %d: Level is not deterministic", seed)
		}
	}
}

func TestWritePNGRecordsDPI(t *testing.T) {
	p := Degrade(mustRender(t, sample, small), Degradation{Scale: 0.5})
	var buf bytes.Buffer
	if err := WritePNG(&buf, p.Image, p.DPI); err != nil {
		t.Fatal(err)
	}
	data := buf.Bytes()
	img, err := png.Decode(bytes.NewReader(data))
	if err != nil {
		t.Fatalf("image/png rejects the file: %v", err)
	}
	if g, ok := img.(*image.Gray); !ok || !bytes.Equal(g.Pix, p.Image.Pix) {
		t.Error("decoded pixels differ")
	}
	// Walk the chunks (W3C, Portable Network Graphics (PNG) Specification,
	// 2nd ed., 2003, §5.3 and §11.3.5.3 pHYs: two 4-byte pixels-per-unit
	// values and a unit byte, 1 = metre).
	var found bool
	for off := 8; off+8 <= len(data); {
		n := int(binary.BigEndian.Uint32(data[off:]))
		typ := string(data[off+4 : off+8])
		if typ == "IDAT" && !found {
			t.Fatal("pHYs must precede IDAT")
		}
		if typ == "pHYs" {
			found = true
			x, y, unit := binary.BigEndian.Uint32(data[off+8:]), binary.BigEndian.Uint32(data[off+12:]), data[off+16]
			dpi := float64(x) * 0.0254
			if unit != 1 || x != y || math.Abs(dpi-p.DPI) > 0.02 {
				t.Errorf("pHYs %d x %d per unit %d = %.2f dpi, want %.2f", x, y, unit, dpi, p.DPI)
			}
		}
		off += 12 + n
	}
	if !found {
		t.Error("no pHYs chunk")
	}
}

func BenchmarkRenderA4(b *testing.B) {
	text := strings.Repeat(sample+"\n\n", 8)
	b.ReportAllocs()
	for b.Loop() {
		if _, _, err := Render(text, Layout{}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "pages/s")
}

func BenchmarkDegradeA4(b *testing.B) {
	p := mustRender(b, strings.Repeat(sample+"\n\n", 8), Layout{})
	d := Level(0.5, 1)
	b.ReportAllocs()
	for b.Loop() {
		Degrade(p, d)
	}
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "pages/s")
}

func TestDegradeTinyPages(t *testing.T) {
	all := Degradation{Skew: 10, Blur: 2, Noise: 10, SaltPepper: 0.5, Light: 1, Contrast: 0.5, Scale: 0.3, Wear: 0.5, Bleed: 1, Seed: 1}
	for _, size := range [][2]int{{0, 0}, {1, 1}, {3, 1}, {1, 7}} {
		q := Degrade(grey(size[0], size[1], 200), all)
		if q == nil || q.Image == nil {
			t.Fatalf("%v: nil page", size)
		}
	}
}

func TestDefaultLayoutIsA4(t *testing.T) {
	// ISO 216: A4 is 210 mm × 297 mm; at 300 dpi that is 2480 × 3508
	// pixels (210/25.4·300 = 2480.3, 297/25.4·300 = 3507.9).
	p, _, err := Render("x", Layout{})
	if err != nil {
		t.Fatal(err)
	}
	if b := p.Image.Bounds(); b.Dx() != 2480 || b.Dy() != 3508 || p.DPI != 300 {
		t.Errorf("zero Layout gives %v at %.0f dpi, want 2480x3508 at 300", b, p.DPI)
	}
	// 11 pt type at 300 dpi: an em of 11/72 inch = 45.8 px; the box spans
	// the font's ascent plus descent, a little over one em for Go Regular
	// (from memory), so about 45-60 px.
	if h := p.Lines[0].Words[0].Box.Dy(); h < 30 || h > 70 {
		t.Errorf("line box %d px high for 11 pt at 300 dpi", h)
	}
}
