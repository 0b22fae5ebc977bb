package ocr_test

import (
	"fmt"
	"image"
	"math"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"recto/ocr"
	"recto/ocr/ocrtest"
	"recto/ocr/synth"
)

// inkPage is a real scan of leptonlib 1.82.0's prog/ folder
// (testdata/realpages/SOURCES.md), labelled by looking at it: text (a page
// of print or writing) or not (a photograph, painting, drawing, engraving,
// woodcut, map, graph paper or music). book groups the pages of one book
// or source, so that pages of a book used to set the text-shape limits are
// not counted as held out. fit marks the 22 pages TestInkShapeRealPages
// checked when the limits of ocr/inkshape.go were set (2026-12-02); the
// others were labelled on 2026-12-03 and were not used to set them.
type inkPage struct {
	file, book, kind string
	text, fit        bool
}

var inkPages = []inkPage{
	// Pages of print or writing.
	{"feyn.tif", "feyn", "article, 300 dpi bilevel", true, true},
	{"pageseg2.tif", "pageseg", "newspaper page with large photographs", true, true},
	{"tribune-page-4x.png", "tribune", "newspaper page, small type", true, true},
	{"table.15.tif", "table", "table", true, true},
	{"brev.56.75.jpg", "breviary", "breviary, 75 dpi", true, true},
	{"toc.99.tif", "toc", "table of contents, 75 dpi bilevel", true, true},
	{"lapide.052.100.jpg", "lapide", "early printed book, 100 dpi", true, true},
	{"lighttext.jpg", "lighttext", "faint text", true, true},
	{"words.44.tif", "words", "book page", true, true},
	{"breviar.38.150.jpg", "breviar", "early printed book, 150 dpi", true, true},
	{"cat.007.jpg", "cat", "catalogue page", true, true},
	{"zanotti-78.jpg", "zanotti", "early printed book", true, true},
	{"brev.14.75.jpg", "breviary", "breviary, 75 dpi", true, false},
	{"brev.20.75.jpg", "breviary", "breviary, 75 dpi", true, false},
	{"brev.53.75.jpg", "breviary", "breviary, 75 dpi", true, false},
	{"pancrazi.15.jpg", "pancrazi", "title page printed sideways, about 100 dpi", true, false},
	{"lyra.005.jpg", "lyra", "title page printed sideways, with a vignette", true, false},
	{"witten.tif", "witten", "article, bilevel, BlackIsZero", true, false},
	{"candelabrum.011.jpg", "candelabrum", "dedication page, 75 dpi", true, false},
	{"colorpage.030.jpg", "colorpage", "book page with two bar charts, 75 dpi", true, false},
	{"stampede2.jpg", "stampede", "newspaper column", true, false},
	{"turingtest.png", "turingtest", "handwritten form", true, false},
	{"boxedpage.jpg", "boxedpage", "Fraktur page, 75 dpi", true, false},
	{"cootoots.png", "cootoots", "table of contents", true, false},
	{"harmoniam100-11.png", "harmoniam", "book page, about 100 dpi", true, false},
	{"pedante.079.jpg", "pedante", "early printed book, 90 dpi", true, false},
	{"table.150.png", "table150", "table, 75 dpi", true, false},
	{"1555.003.jpg", "1555", "early printed book, large type", true, false},
	{"amoris.2.150.jpg", "amoris", "early printed book, 150 dpi", true, false},
	{"lucasta.150.jpg", "lucasta", "book page, 150 dpi", true, false},
	{"shearer.148.tif", "shearer", "article", true, false},
	{"italic.png", "italic", "italic type", true, false},
	{"german.png", "german", "Fraktur page, photographed", true, false},
	{"contrast-orig-60.jpg", "contrast", "faint page, 75 dpi", true, false},
	{"copernicus.png", "copernicus", "diagram with handwritten labels", true, false},
	{"cavalerie.29.jpg", "cavalerie", "book page, 75 dpi", true, false},
	{"w91frag.jpg", "w91frag", "newspaper fragment", true, false},
	// Pictures.
	{"juditharismax.jpg", "judith", "painting", false, true},
	{"test24.jpg", "test24", "photograph", false, true},
	{"fish24.jpg", "fish", "ink painting with two signs", false, true},
	{"tetons.jpg", "tetons", "photograph", false, true},
	{"wet-day.jpg", "wet-day", "painting with a caption", false, true},
	{"lion-page.00010.jpg", "lion", "drawing with a caption", false, true},
	{"lion-page.00016.jpg", "lion", "drawing with a caption", false, true},
	{"cavalerie.11.jpg", "cavalerie", "engraving with a caption", false, true},
	{"dreyfus2.png", "dreyfus", "cartoon with captions", false, true},
	{"warped_paper.jpg", "warped", "graph paper", false, true},
	{"brev.06.75.jpg", "breviary", "engraved bookplate with a three-line caption, 75 dpi", false, false},
	{"brev.10.75.jpg", "breviary", "woodcut coat of arms, lettered border, 75 dpi", false, false},
	{"brev.36.75.jpg", "breviary", "full-page woodcut, 75 dpi", false, false},
	{"lyra.036.jpg", "lyra", "engraving with captions", false, false},
	{"marge.jpg", "marge", "photograph", false, false},
	{"karen8.jpg", "karen", "photograph", false, false},
	{"church.png", "church", "photograph", false, false},
	{"rock.png", "rock", "photograph", false, false},
	{"wyom.jpg", "wyom", "photograph", false, false},
	{"map.057.jpg", "map057", "map", false, false},
	{"map1.jpg", "map1", "map", false, false},
	{"comap.110.jpg", "comap", "map", false, false},
	{"colorseg.jpg", "colorseg", "photograph", false, false},
	{"bois-4.tif", "bois", "printed music", false, false},
	{"ortiz-02.tif", "ortiz", "printed music", false, false},
	{"zier.jpg", "zier", "printed music, photographed", false, false},
}

// inkGaps are real pages of text whose ink is known not to be measured as
// text-like (logged, not checked; the test fails when one passes, so that
// it comes off the list).
var inkGaps = map[string]string{
	// Arabic script: joined letters with dots above and below are not
	// marks of one height side by side (40 lines of 0.11 of the marks).
	"arabic2.png": "Arabic text page",
	// An open book photographed at 45 dpi: its letters are 2-3 pixels
	// tall, under the 4 pixels the measure takes for a letter (and under
	// what the engine can read).
	"binding-example.45.jpg": "book page photographed at 45 dpi",
}

// smallPrint: the known gaps whose ink does look like text when marks of
// 2-3 pixels are taken for letters (InkShape.SmallText), so that triage
// sends them for rescanning, not to picture.
var smallPrint = map[string]bool{"binding-example.45.jpg": true}

// TestInkShapeRealPagesLabelled (the real-scans issue, part 5): on the
// labelled real scans of inkPages, the ink of every page of text looks
// like text (as it lies, turned a quarter or light on dark) and the ink of
// no picture does. The log gives, per text-shape limit (TextLikeMinLines,
// TextLikeMinMarks, TextLikeMinInk), the text page closest to it and the
// pictures that pass it, apart for the pages that set the limits and the
// pages held out (of books not among those).
func TestInkShapeRealPagesLabelled(t *testing.T) {
	if testing.Short() {
		t.Skip(longSequential)
	}
	dir := filepath.Join(ocrtest.RealPages(t), "leptonica")
	fitBooks := map[string]bool{}
	for _, p := range inkPages {
		if p.fit {
			fitBooks[p.book] = true
		}
	}
	type measured struct {
		inkPage
		s ocr.InkShape
	}
	var all []measured
	count := map[string]int{}
	for _, p := range inkPages {
		d, err := ocr.DecodeFile(filepath.Join(dir, p.file), ocr.DecodeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		pr, err := ocr.Prepare(d.Image, ocr.PrepOptions{DPI: d.DPI})
		if err != nil {
			t.Fatal(err)
		}
		s := pr.Ink
		all = append(all, measured{p, s})
		set := "fit"
		if !p.fit {
			set = "held out"
			if fitBooks[p.book] {
				set = "held out, book among the fit pages"
			}
		}
		kind := map[bool]string{true: "text", false: "pictures"}[p.text]
		count[kind+", "+set]++
		t.Logf("%-22s %-8s %-34s text-like %-5v turned %-5v inverted %-5v small %-5v %3d lines, %.2f of %4d marks on lines, text ink %.2f, x-height %.1f",
			p.file, kind, set, s.LooksLikeText(), s.Turned, s.Inverted, s.SmallText, s.Lines, share(s), s.Letters, s.TextInk, s.XHeight)
		if s.LooksLikeText() != p.text {
			t.Errorf("%s (%s): looks like text %v, want %v (%+v)", p.file, p.kind, s.LooksLikeText(), p.text, s)
		}
		if !p.text && s.SmallText {
			t.Errorf("%s (%s): a picture measured as small print", p.file, p.kind)
		}
	}
	keys := make([]string, 0, len(count))
	for k := range count {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	var b strings.Builder
	for _, k := range keys {
		fmt.Fprintf(&b, "%s: %d; ", k, count[k])
	}
	t.Logf("pages: %s", b.String())
	// Margins: per limit, the text page closest to it (value over limit)
	// and how many pictures pass it on their own (a picture is kept out by
	// any one limit it fails).
	limits := []struct {
		name  string
		limit float64
		value func(ocr.InkShape) float64
	}{
		{"lines", ocr.TextLikeMinLines, func(s ocr.InkShape) float64 { return float64(s.Lines) }},
		{"share of marks on lines", ocr.TextLikeMinMarks, share},
		{"share of ink on lines", ocr.TextLikeMinInk, func(s ocr.InkShape) float64 { return s.TextInk }},
	}
	for _, l := range limits {
		for _, held := range []bool{false, true} {
			low, lowPage, pass, pics := math.Inf(1), "", 0, 0
			for _, m := range all {
				if held != !m.fit {
					continue
				}
				v := l.value(m.s)
				if m.text && v < low {
					low, lowPage = v, m.file
				}
				if !m.text {
					pics++
					if v >= l.limit {
						pass++
					}
				}
			}
			set := map[bool]string{false: "fit pages", true: "held-out pages"}[held]
			t.Logf("limit %s ≥ %g, %s: lowest text page %s %.2f (%.1f times the limit); %d of %d pictures pass it", l.name, l.limit, set, lowPage, low, low/l.limit, pass, pics)
		}
	}
	for f, why := range inkGaps {
		d, err := ocr.DecodeFile(filepath.Join(dir, f), ocr.DecodeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		pr, err := ocr.Prepare(d.Image, ocr.PrepOptions{DPI: d.DPI})
		if err != nil {
			t.Fatal(err)
		}
		if pr.Ink.LooksLikeText() {
			t.Errorf("%s (%s) is listed as a known gap but its ink looks like text now: take it off the list", f, why)
			continue
		}
		t.Logf("KNOWN GAP %s (%s): text whose ink does not look like text: %d lines, %.2f of %d marks on lines; small print %v", f, why, pr.Ink.Lines, share(pr.Ink), pr.Ink.Letters, pr.Ink.SmallText)
		if want := smallPrint[f]; pr.Ink.SmallText != want {
			t.Errorf("%s (%s): measured as small print %v, want %v", f, why, pr.Ink.SmallText, want)
		}
	}
}

func share(s ocr.InkShape) float64 {
	if s.Letters == 0 {
		return 0
	}
	return float64(s.LineMarks) / float64(s.Letters)
}

// TestInkShapeSynthKinds: the ink of every synthetic page kind of text
// (ocr/synth's kinds: clean, low resolution, skewed, noisy, uneven light,
// worn, faded, bleeding) looks like text at the demo's 300 dpi and reduced
// to 100 and 75 dpi without a tag, as prepared (noisy pages are measured
// again after denoising), and the page is not found blank; at 100 dpi,
// turned a quarter it looks like text and is marked turned (unless
// measured after denoising), and light on dark it is marked inverted; the
// blank kind is blank.
//
// Known gap, logged: the uneven kind at 300 dpi (see measureInk). Not
// checked, and logged: the blank kind's grain, 4-5 pixels high, is
// chained into "lines" (triage decides the page blank before it looks at
// the ink), and prepared light on dark a faded page is found blank (the
// preparation's own paper-level test, prepare.go).
func TestInkShapeSynthKinds(t *testing.T) {
	if testing.Short() {
		t.Skip(longSequential)
	}
	text := strings.Repeat("The harbour board of Saltmarsh met on the first Tuesday of March to hear the report of the river warden.\n\n", 10)
	for _, k := range synth.Kinds() {
		body := text
		if k.Blank {
			body = ""
		}
		clean, _, err := synth.Render(body, synth.Layout{})
		if err != nil {
			t.Fatal(err)
		}
		for _, dpi := range []float64{300, 100, 75} {
			d := k.D
			d.Seed = 11
			if dpi < 300 {
				d.Scale, d.Blur = dpi/300, max(0.8, d.Blur)
			}
			page := synth.Degrade(clean, d)
			for _, variant := range []string{"", "turned", "inverted"} {
				if variant != "" && (k.Blank || dpi != 100) {
					continue
				}
				img := page.Image
				switch variant {
				case "turned":
					img = turn(img)
				case "inverted":
					img = negative(img)
				}
				p, err := ocr.Prepare(img, ocr.PrepOptions{})
				if err != nil {
					t.Fatal(err)
				}
				s := p.Ink
				name := fmt.Sprintf("%s at %.0f dpi %s", k.Name, page.DPI, variant)
				t.Logf("%-28s text-like %-5v blank %-5v turned %-5v inverted %-5v  denoised %-5v %3d lines, %.2f of %d marks, text ink %.2f, x-height %.1f",
					name, s.LooksLikeText(), p.Blank, s.Turned, s.Inverted, s.Denoised, s.Lines, share(s), s.Letters, s.TextInk, s.XHeight)
				gap := k.Name == "uneven" && page.DPI == 300 && variant == ""
				switch {
				case gap && s.LooksLikeText():
					t.Errorf("%s: listed as a known gap but its ink looks like text now: take it off", name)
				case gap:
					t.Logf("KNOWN GAP %s: Otsu's one threshold turns the dim half of the page into one dark mass (the engine still reads the page: it is not decided picture)", name)
				case k.Blank && !p.Blank:
					t.Errorf("%s: not blank", name)
				case !k.Blank && variant == "" && p.Blank:
					t.Errorf("%s: a page of text found blank", name)
				case !k.Blank && !s.LooksLikeText():
					t.Errorf("%s: a page of text whose ink does not look like text: %+v", name, s)
				case !k.Blank && variant == "" && (s.Turned || s.Inverted):
					t.Errorf("%s: upright, dark on light, but measured turned %v, inverted %v", name, s.Turned, s.Inverted)
				case variant == "inverted" && !s.Inverted:
					t.Errorf("%s: light on dark, but not measured inverted", name)
				case variant == "turned" && !s.Turned && !s.Denoised:
					// A noisy page measured after denoising may look like
					// text as it lies (the blur joins the letters of the
					// turned lines); else it must be measured turned.
					t.Errorf("%s: turned a quarter, but not measured turned", name)
				}
			}
		}
	}
}

// turn returns g turned a quarter clockwise.
func turn(g *image.Gray) *image.Gray {
	w, h := g.Rect.Dx(), g.Rect.Dy()
	o := image.NewGray(image.Rect(0, 0, h, w))
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			o.Pix[x*o.Stride+(h-1-y)] = g.Pix[y*g.Stride+x]
		}
	}
	return o
}

// negative returns g with its grey levels reversed.
func negative(g *image.Gray) *image.Gray {
	o := image.NewGray(g.Rect)
	for i, v := range g.Pix {
		o.Pix[i] = 255 - v
	}
	return o
}

// TestTurnMarksAgreesWithMirroredPage: measureInk measures a page turned a
// quarter from the marks it found on the page as it lies, with x and y
// swapped, instead of labelling the mirrored page again. On every labelled
// real scan, both ways, the two measures must be equal in every figure.
// (Mirroring keeps 8-connected components: common practice, e.g. Gonzalez
// and Woods, Digital Image Processing, on connectivity.)
func TestTurnMarksAgreesWithMirroredPage(t *testing.T) {
	if testing.Short() {
		t.Skip(longSequential)
	}
	dir := filepath.Join(ocrtest.RealPages(t), "leptonica")
	withLines := 0
	for _, p := range inkPages {
		d, err := ocr.DecodeFile(filepath.Join(dir, p.file), ocr.DecodeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		fromMarks, relabelled := ocr.TurnedTwoWays(d.Image)
		for i, way := range []string{"turned", "turned back"} {
			if fromMarks[i] != relabelled[i] {
				t.Errorf("%s, %s: from the marks %+v, labelled anew %+v", p.file, way, fromMarks[i], relabelled[i])
			}
			if relabelled[i].Lines > 0 {
				withLines++
			}
		}
	}
	// The comparison means little if no measure found lines.
	if withLines < len(inkPages)/2 {
		t.Errorf("only %d of %d measures found lines", withLines, 2*len(inkPages))
	}
}
