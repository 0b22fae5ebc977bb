package main

// TEMPORARY stand-in for the demo collection and page rendering that
// recto/ocr/synth provides (synth.Demo, Render, Degrade, WritePNG). Deleted
// once synth is on main; demo.go only calls demoPages and renderDemoPage.

import (
	"bytes"
	"fmt"
	"image"
	"image/draw"
	"image/png"
	"math/rand/v2"
	"strings"

	"golang.org/x/image/font"
	"golang.org/x/image/font/gofont/goregular"
	"golang.org/x/image/font/opentype"
	"golang.org/x/image/math/fixed"
)

// demoTitles is invented text about invented places.
var demoTitles = []struct{ name, text string }{
	{"Wrenmouth Harbour Gazette", "The harbour board of Wrenmouth met on Tuesday to hear the report of the pilot station. " +
		"Seven schooners came in with salt and timber, and the ferry to Lantern Isle kept its winter timetable. " +
		"The board agreed to mend the north quay before the spring tides and to light the outer buoy every night."},
	{"Almanac of the Fenwold Valley", "In the Fenwold the first frost came early this year, and the orchards of Mirrow Ford " +
		"were picked a fortnight before the fair. The mill at Stonebeck ground three hundred sacks of barley, " +
		"and the new bridge over the Tarrow carried its first cart on the feast of the lanterns."},
	{"Proceedings of the Cobble Street Reading Society", "At the autumn meeting the society heard a paper on the old " +
		"printing house in Cobble Street, where the first valley almanac was set by hand. Members lent the library " +
		"forty volumes of sermons and sea charts, and the secretary read letters from the reading rooms of Hallow Down."},
}

func demoPages() []demoPage {
	var out []demoPage
	for ti, t := range demoTitles {
		words := strings.Fields(t.text)
		for p := range 8 {
			r := rand.New(rand.NewPCG(uint64(ti+1), uint64(p+1)))
			var b strings.Builder
			for range 60 + r.IntN(40) {
				b.WriteString(words[r.IntN(len(words))])
				b.WriteByte(' ')
			}
			out = append(out, demoPage{
				Title: demoSlug(t.name), Name: fmt.Sprintf("page-%02d", p+1),
				Text: strings.TrimSpace(b.String()), Level: float64(p%4) / 4, Truth: p%2 == 0,
			})
		}
	}
	return out
}

// renderDemoPage sets the text in 11 pt Go Regular on a 300 dpi A5 page,
// adds noise and dropouts according to the level, and returns PNG bytes and
// the ground truth (the text as laid out, one line per printed line).
var renderDemoPage = func(p demoPage) ([]byte, string, error) {
	f, err := opentype.Parse(goregular.TTF)
	if err != nil {
		return nil, "", err
	}
	face, err := opentype.NewFace(f, &opentype.FaceOptions{Size: 11, DPI: 300, Hinting: font.HintingFull})
	if err != nil {
		return nil, "", err
	}
	defer face.Close()
	const w, h, margin = 1748, 2480, 200 // A5 at 300 dpi
	img := image.NewGray(image.Rect(0, 0, w, h))
	draw.Draw(img, img.Bounds(), image.White, image.Point{}, draw.Src)
	d := &font.Drawer{Dst: img, Src: image.Black, Face: face}
	lineH := face.Metrics().Height.Ceil() * 135 / 100
	y := margin + lineH
	var lines []string
	var line []string
	flush := func() {
		s := strings.Join(line, " ")
		d.Dot = fixed.P(margin, y)
		d.DrawString(s)
		lines = append(lines, s)
		line, y = nil, y+lineH
	}
	for _, word := range strings.Fields(p.Text) {
		try := strings.Join(append(line, word), " ")
		if len(line) > 0 && d.MeasureString(try).Ceil() > w-2*margin {
			flush()
		}
		line = append(line, word)
	}
	if len(line) > 0 {
		flush()
	}
	r := rand.New(rand.NewPCG(uint64(len(p.Text)), uint64(p.Level*1000)+1))
	for i := range img.Pix {
		v := float64(img.Pix[i]) + r.NormFloat64()*60*p.Level
		if r.Float64() < 0.02*p.Level {
			v = 255 * float64(r.IntN(2))
		}
		img.Pix[i] = uint8(max(0, min(255, v)))
	}
	var buf bytes.Buffer
	if err := png.Encode(&buf, img); err != nil {
		return nil, "", err
	}
	return buf.Bytes(), strings.Join(lines, "\n") + "\n", nil
}
