package synth

import (
	"fmt"
	"image"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"unicode"

	"golang.org/x/image/font"
	"golang.org/x/image/font/gofont/gobold"
	"golang.org/x/image/font/gofont/gobolditalic"
	"golang.org/x/image/font/gofont/goitalic"
	"golang.org/x/image/font/gofont/gomedium"
	"golang.org/x/image/font/gofont/gomediumitalic"
	"golang.org/x/image/font/gofont/gomono"
	"golang.org/x/image/font/gofont/gomonobold"
	"golang.org/x/image/font/gofont/gomonoitalic"
	"golang.org/x/image/font/gofont/goregular"
	"golang.org/x/image/font/gofont/gosmallcaps"
	"golang.org/x/image/font/opentype"
	"golang.org/x/image/font/sfnt"
	"golang.org/x/image/math/fixed"
)

// Layout describes the page and the type. The zero value is an A4 page at
// 300 dpi with 20 mm margins set in 11 pt Go Regular.
type Layout struct {
	DPI         int     // resolution, dots per inch; 0 means 300
	WidthMM     float64 // page width, millimetres; 0 means 210 (A4)
	HeightMM    float64 // page height, millimetres; 0 means 297 (A4)
	MarginMM    float64 // margin on all four sides, millimetres; 0 means 20
	FontSizePt  float64 // type size, points (1/72 inch); 0 means 11
	LineSpacing float64 // baseline-to-baseline distance as a multiple of the type size; 0 means 1.35
	Font        string  // a Go font: "regular" (default), "bold", "italic", "bolditalic", "medium", "mediumitalic", "mono", "monobold", "monoitalic", "smallcaps"; or the path of a TrueType/OpenType file (IsFontFile), e.g. one of Debian's fonts-* packages
}

// IsFontFile reports whether a Layout.Font names a font file rather than a
// Go font: a name ending in .ttf or .otf (any case).
func IsFontFile(name string) bool {
	ext := strings.ToLower(filepath.Ext(name))
	return ext == ".ttf" || ext == ".otf"
}

// Fonts lists the names Layout.Font accepts, sorted.
func Fonts() []string {
	names := make([]string, 0, len(fontData))
	for n := range fontData {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

var fontData = map[string][]byte{
	"regular":      goregular.TTF,
	"bold":         gobold.TTF,
	"italic":       goitalic.TTF,
	"bolditalic":   gobolditalic.TTF,
	"medium":       gomedium.TTF,
	"mediumitalic": gomediumitalic.TTF,
	"mono":         gomono.TTF,
	"monobold":     gomonobold.TTF,
	"monoitalic":   gomonoitalic.TTF,
	"smallcaps":    gosmallcaps.TTF,
}

var (
	fontMu     sync.Mutex
	fontParsed = map[string]*opentype.Font{}
)

func parsedFont(name string) (*opentype.Font, error) {
	if name == "" {
		name = "regular"
	}
	fontMu.Lock()
	defer fontMu.Unlock()
	if f, ok := fontParsed[name]; ok {
		return f, nil
	}
	data, ok := fontData[name]
	if !ok && IsFontFile(name) {
		var err error
		if data, err = os.ReadFile(name); err != nil {
			return nil, fmt.Errorf("synth: font file: %w", err)
		}
	} else if !ok {
		return nil, fmt.Errorf("synth: unknown font %q (have %s, or a .ttf/.otf file)", name, strings.Join(Fonts(), ", "))
	}
	f, err := opentype.Parse(data)
	if err != nil {
		return nil, fmt.Errorf("synth: font %q: %w", name, err)
	}
	fontParsed[name] = f
	return f, nil
}

// withDefaults returns l with zero fields replaced by their defaults.
func (l Layout) withDefaults() Layout {
	if l.DPI == 0 {
		l.DPI = 300
	}
	if l.WidthMM == 0 {
		l.WidthMM = 210
	}
	if l.HeightMM == 0 {
		l.HeightMM = 297
	}
	if l.MarginMM == 0 {
		l.MarginMM = 20
	}
	if l.FontSizePt == 0 {
		l.FontSizePt = 11
	}
	if l.LineSpacing == 0 {
		l.LineSpacing = 1.35
	}
	if l.Font == "" {
		l.Font = "regular"
	}
	return l
}

// Page is a rendered (and possibly degraded) page with its ground truth.
type Page struct {
	Image *image.Gray // the page, 0 black ink to 255 white paper
	DPI   float64     // resolution of Image, dots per inch
	Truth string      // the text exactly as laid out: lines joined by "\n", paragraphs separated by an empty line, no final newline
	Lines []LineBox   // the text lines in reading order
}

// LineBox is one laid-out line of text.
type LineBox struct {
	Text  string          // the words of the line joined by single spaces
	Box   image.Rectangle // page pixels: from the top of the tallest glyph cell to the bottom of the descenders
	Words []WordBox       // the words of the line, left to right
}

// WordBox is one laid-out word.
type WordBox struct {
	Text string
	Box  image.Rectangle // page pixels; after skew, the bounding box of the rotated box
}

// maxPagePixels bounds the page size Render accepts (about A2 at 600 dpi).
const maxPagePixels = 1 << 27

// glyph is a rendered glyph mask with its offset from the pen position.
type glyph struct {
	dx, dy int // offset of the mask's top-left corner from the pen (baseline) position
	w, h   int
	mask   []uint8 // coverage 0..255, w*h
	adv    fixed.Int26_6
}

// renderer rasterises glyphs through one face, caching each rune's mask.
type renderer struct {
	face  font.Face
	cache map[rune]*glyph
}

func (r *renderer) glyph(c rune) *glyph {
	if g, ok := r.cache[c]; ok {
		return g
	}
	g := &glyph{}
	dr, mask, maskp, adv, ok := r.face.Glyph(fixed.Point26_6{}, c)
	if !ok {
		// Draw the font's missing-glyph box, as a printer would.
		dr, mask, maskp, adv, _ = r.face.Glyph(fixed.Point26_6{}, unicode.ReplacementChar)
	}
	g.adv = adv
	if mask != nil && !dr.Empty() {
		g.dx, g.dy = dr.Min.X, dr.Min.Y
		g.w, g.h = dr.Dx(), dr.Dy()
		g.mask = make([]uint8, g.w*g.h)
		for y := 0; y < g.h; y++ {
			for x := 0; x < g.w; x++ {
				_, _, _, a := mask.At(maskp.X+x, maskp.Y+y).RGBA()
				g.mask[y*g.w+x] = uint8(a >> 8)
			}
		}
	}
	r.cache[c] = g
	return g
}

// draw paints glyph g with its pen at (x, y) in black, darkening dst.
func (g *glyph) draw(dst *image.Gray, x, y int) {
	b := dst.Bounds()
	for j := 0; j < g.h; j++ {
		py := y + g.dy + j
		if py < b.Min.Y || py >= b.Max.Y {
			continue
		}
		row := dst.Pix[(py-b.Min.Y)*dst.Stride:]
		m := g.mask[j*g.w : (j+1)*g.w]
		for i, a := range m {
			if a == 0 {
				continue
			}
			px := x + g.dx + i
			if px < b.Min.X || px >= b.Max.X {
				continue
			}
			v := &row[px-b.Min.X]
			*v = uint8(uint32(*v) * uint32(255-a) / 255)
		}
	}
}

func (r *renderer) width(word []rune) fixed.Int26_6 {
	var w fixed.Int26_6
	for i, c := range word {
		if i > 0 {
			w += r.face.Kern(word[i-1], c)
		}
		w += r.glyph(c).adv
	}
	return w
}

// Render lays text out on a white page and draws it in black: paragraphs
// are separated by one or more empty lines; within a paragraph, runs of
// white space (single newlines included) separate words, and words are
// wrapped to the text width. A word wider than the text width is broken
// between characters. Render stops at the bottom margin and returns the
// text that did not fit, paragraphs separated by "\n\n", or "" when all of
// it fit. Empty text gives a blank page with an empty Truth.
//
// It returns an error for an unknown font or a page whose size or margins
// leave no room for a line of text.
func Render(text string, l Layout) (*Page, string, error) {
	l = l.withDefaults()
	if l.DPI < 0 || l.WidthMM < 0 || l.HeightMM < 0 || l.MarginMM < 0 || l.FontSizePt < 0 || l.LineSpacing < 0 {
		return nil, "", fmt.Errorf("synth: negative layout value in %+v", l)
	}
	px := func(mm float64) int { return int(math.Round(mm / 25.4 * float64(l.DPI))) }
	w, h := px(l.WidthMM), px(l.HeightMM)
	if w <= 0 || h <= 0 || w*h > maxPagePixels {
		return nil, "", fmt.Errorf("synth: page of %dx%d pixels is empty or too large", w, h)
	}
	f, err := parsedFont(l.Font)
	if err != nil {
		return nil, "", err
	}
	face, err := opentype.NewFace(f, &opentype.FaceOptions{Size: l.FontSizePt, DPI: float64(l.DPI), Hinting: font.HintingNone})
	if err != nil {
		return nil, "", fmt.Errorf("synth: font %q: %w", l.Font, err)
	}
	defer face.Close()
	r := &renderer{face: face, cache: make(map[rune]*glyph)}
	met := face.Metrics()
	ascent, descent := met.Ascent.Ceil(), met.Descent.Ceil()
	lineH := int(math.Round(l.LineSpacing * l.FontSizePt / 72 * float64(l.DPI)))
	margin := px(l.MarginMM)
	left, right, top, bottom := margin, w-margin, margin, h-margin
	textW := fixed.I(right - left)
	if right-left < 1 || bottom-top < ascent+descent {
		return nil, "", fmt.Errorf("synth: margins of %.1f mm leave no room for text on a %.0fx%.0f mm page", l.MarginMM, l.WidthMM, l.HeightMM)
	}

	img := image.NewGray(image.Rect(0, 0, w, h))
	fillWhite(img.Pix)
	page := &Page{Image: img, DPI: float64(l.DPI)}

	paras := splitParagraphs(text)
	space := r.glyph(' ').adv
	baseline := top + ascent
	var truth strings.Builder
	fits := func() bool { return baseline+descent <= bottom }

	for pi, para := range paras {
		if pi > 0 {
			baseline += lineH / 2 // paragraph gap
		}
		if !fits() {
			return page.finish(&truth), joinRest(paras[pi], paras[pi+1:]), nil
		}
		words := para
		wi := 0
		firstLine := true
		for wi < len(words) {
			if !fits() {
				return page.finish(&truth), joinRest(words[wi:], paras[pi+1:]), nil
			}
			// Fill one line.
			var line []string
			var x fixed.Int26_6
			for wi < len(words) {
				rw := []rune(words[wi])
				ww := r.width(rw)
				add := ww
				if len(line) > 0 {
					add += space
				}
				if x+add <= textW {
					line = append(line, words[wi])
					x += add
					wi++
					continue
				}
				if len(line) == 0 {
					// The word alone is wider than the line: break it.
					n := 1
					for n < len(rw) && r.width(rw[:n+1]) <= textW {
						n++
					}
					line = append(line, string(rw[:n]))
					words = append(append(words[:wi:wi], string(rw[:n]), string(rw[n:])), words[wi+1:]...)
					wi++
				}
				break
			}
			if firstLine && pi > 0 {
				truth.WriteString("\n\n")
			} else if truth.Len() > 0 {
				truth.WriteByte('\n')
			}
			firstLine = false
			lb := LineBox{Text: strings.Join(line, " ")}
			truth.WriteString(lb.Text)
			pen := fixed.I(left)
			for i, word := range line {
				if i > 0 {
					pen += space
				}
				start := pen
				rw := []rune(word)
				for j, c := range rw {
					if j > 0 {
						pen += r.face.Kern(rw[j-1], c)
					}
					g := r.glyph(c)
					g.draw(img, pen.Round(), baseline)
					pen += g.adv
				}
				wb := WordBox{Text: word, Box: image.Rect(start.Floor(), baseline-ascent, pen.Ceil(), baseline+descent)}
				lb.Words = append(lb.Words, wb)
				lb.Box = lb.Box.Union(wb.Box)
			}
			page.Lines = append(page.Lines, lb)
			baseline += lineH
		}
	}
	return page.finish(&truth), "", nil
}

func (p *Page) finish(truth *strings.Builder) *Page {
	p.Truth = truth.String()
	return p
}

// splitParagraphs splits text at empty lines and each paragraph into words.
func splitParagraphs(text string) [][]string {
	text = strings.ReplaceAll(text, "\r\n", "\n")
	var paras [][]string
	var cur []string
	for _, line := range strings.Split(text, "\n") {
		f := strings.Fields(line)
		if len(f) == 0 {
			if len(cur) > 0 {
				paras = append(paras, cur)
				cur = nil
			}
			continue
		}
		cur = append(cur, f...)
	}
	if len(cur) > 0 {
		paras = append(paras, cur)
	}
	return paras
}

// joinRest rebuilds the text of the words first followed by paragraphs rest.
func joinRest(first []string, rest [][]string) string {
	var parts []string
	if len(first) > 0 {
		parts = append(parts, strings.Join(first, " "))
	}
	for _, p := range rest {
		parts = append(parts, strings.Join(p, " "))
	}
	return strings.Join(parts, "\n\n")
}

// Missing returns the distinct runes of text, in order of first
// appearance, that the font named fontName ("" for "regular") has no glyph
// for; Render draws those as the font's missing-glyph box, so a page's
// truth would not match its image. White space is never reported.
func Missing(text, fontName string) ([]rune, error) {
	f, err := parsedFont(fontName)
	if err != nil {
		return nil, err
	}
	var buf sfnt.Buffer
	var out []rune
	seen := map[rune]bool{}
	for _, c := range text {
		if seen[c] || unicode.IsSpace(c) {
			continue
		}
		seen[c] = true
		if i, err := f.GlyphIndex(&buf, c); err != nil || i == 0 {
			out = append(out, c)
		}
	}
	return out, nil
}

// fillWhite sets every byte of b to 255 by doubling copies, which is much
// faster than a byte loop (and than one under the race detector).
func fillWhite(b []byte) {
	if len(b) == 0 {
		return
	}
	b[0] = 255
	for n := 1; n < len(b); n *= 2 {
		copy(b[n:], b[:n])
	}
}
