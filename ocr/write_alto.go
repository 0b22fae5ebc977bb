package ocr

import (
	"bufio"
	"encoding/xml"
	"io"
	"path/filepath"
	"strconv"
)

// ALTO v4 identifiers written into every document.
const (
	ALTONamespace      = "http://www.loc.gov/standards/alto/ns-v4#"
	ALTOSchemaLocation = "http://www.loc.gov/standards/alto/v4/alto-4-2.xsd"
)

// WriteALTO writes rec as an ALTO v4 document (schema version 4.2): one
// Page holding a PrintSpace with one TextBlock per engine block
// (Word.Block, e.g. a column), one TextLine per line and one String per
// word, in the engine's reading order, with HPOS/VPOS/WIDTH/HEIGHT in pixels of the original image
// (MeasurementUnit "pixel"), WC the word confidence in [0, 1], and each of
// Word.Alt as an ALTERNATIVE element. Package ocr/alto is the documented
// entry point; this function exists because WriteOutputs needs it and
// ocr/alto imports ocr.
//
// The output is deterministic: it carries no date, so equal records give
// equal files.
func WriteALTO(w io.Writer, rec *Record) error {
	bw := bufio.NewWriter(w)
	a := altoWriter{w: bw}
	a.s(`<?xml version="1.0" encoding="UTF-8"?>` + "\n")
	a.s(`<alto xmlns="` + ALTONamespace + `" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance" xsi:schemaLocation="` +
		ALTONamespace + ` ` + ALTOSchemaLocation + `" SCHEMAVERSION="4.2">` + "\n")
	a.s("  <Description>\n    <MeasurementUnit>pixel</MeasurementUnit>\n")
	if rec.Source != "" {
		a.s("    <sourceImageInformation>\n      <fileName>")
		a.esc(filepath.ToSlash(rec.Source))
		a.s("</fileName>\n    </sourceImageInformation>\n")
	}
	a.s(`    <Processing ID="proc0">` + "\n")
	a.s("      <processingCategory>contentGeneration</processingCategory>\n")
	a.s("      <processingStepSettings>")
	a.esc("binarization=" + orNone(rec.Binarization) + " skew_degrees=" + strconv.FormatFloat(rec.Skew, 'f', 2, 64) +
		" dpi=" + strconv.FormatFloat(rec.DPI, 'f', -1, 64))
	a.s("</processingStepSettings>\n")
	a.s("      <processingSoftware>\n        <softwareName>recto</softwareName>\n")
	a.s("        <applicationDescription>page preparation by recto, recognition by Tesseract</applicationDescription>\n")
	a.s("      </processingSoftware>\n    </Processing>\n  </Description>\n")
	a.s("  <Layout>\n")
	a.s(`    <Page ID="page1" PHYSICAL_IMG_NR="1"`)
	a.attrInt("WIDTH", rec.Width)
	a.attrInt("HEIGHT", rec.Height)
	if len(rec.Words) > 0 {
		a.attrConf("PC", rec.MeanConfidence)
	}
	a.s(">\n")

	words := rec.Words
	ps := Box{W: rec.Width, H: rec.Height}
	if len(words) > 0 {
		ps = wordsBox(words)
	}
	a.s("      <PrintSpace")
	a.box(ps)
	a.s(">\n")
	line := 0
	for b := 0; b < len(words); {
		e := b
		for e < len(words) && words[e].Block == words[b].Block {
			e++
		}
		a.s(`        <TextBlock ID="block` + strconv.Itoa(words[b].Block) + `_` + strconv.Itoa(b) + `"`)
		a.box(wordsBox(words[b:e]))
		a.s(">\n")
		for l := b; l < e; {
			m := l
			for m < e && words[m].Line == words[l].Line {
				m++
			}
			a.s(`          <TextLine ID="line` + strconv.Itoa(line) + `"`)
			line++
			a.box(wordsBox(words[l:m]))
			a.s(">\n")
			for i := l; i < m; i++ {
				wd := words[i]
				if i > l {
					prev := words[i-1].Box
					gap := wd.Box.X - (prev.X + prev.W)
					a.s("            <SP")
					if gap > 0 {
						a.attrInt("HPOS", prev.X+prev.W)
						a.attrInt("VPOS", min(prev.Y, wd.Box.Y))
						a.attrInt("WIDTH", gap)
					}
					a.s("/>\n")
				}
				a.s(`            <String ID="word` + strconv.Itoa(i) + `" CONTENT="`)
				a.esc(wd.Text)
				a.s(`"`)
				a.box(wd.Box)
				a.attrConf("WC", wd.Conf)
				if len(wd.Alt) == 0 {
					a.s("/>\n")
					continue
				}
				a.s(">\n")
				for _, alt := range wd.Alt {
					a.s("              <ALTERNATIVE>")
					a.esc(alt)
					a.s("</ALTERNATIVE>\n")
				}
				a.s("            </String>\n")
			}
			a.s("          </TextLine>\n")
			l = m
		}
		a.s("        </TextBlock>\n")
		b = e
	}
	a.s("      </PrintSpace>\n    </Page>\n  </Layout>\n</alto>\n")
	if a.err != nil {
		return a.err
	}
	return bw.Flush()
}

func orNone(s string) string {
	if s == "" {
		return "none"
	}
	return s
}

// wordsBox is the smallest box holding every word's box.
func wordsBox(ws []Word) Box {
	x0, y0 := ws[0].Box.X, ws[0].Box.Y
	x1, y1 := x0+ws[0].Box.W, y0+ws[0].Box.H
	for _, w := range ws[1:] {
		x0, y0 = min(x0, w.Box.X), min(y0, w.Box.Y)
		x1, y1 = max(x1, w.Box.X+w.Box.W), max(y1, w.Box.Y+w.Box.H)
	}
	return Box{X: x0, Y: y0, W: x1 - x0, H: y1 - y0}
}

// altoWriter keeps the first write error so the writer code stays linear.
type altoWriter struct {
	w   *bufio.Writer
	err error
}

func (a *altoWriter) s(s string) {
	if a.err == nil {
		_, a.err = a.w.WriteString(s)
	}
}

// esc writes s escaped for XML text and attribute values; characters XML
// cannot carry become U+FFFD.
func (a *altoWriter) esc(s string) {
	if a.err == nil {
		a.err = xml.EscapeText(a.w, []byte(s))
	}
}

func (a *altoWriter) attrInt(name string, v int) {
	a.s(" " + name + `="` + strconv.Itoa(v) + `"`)
}

// attrConf writes a confidence clamped to [0, 1] with three decimals.
func (a *altoWriter) attrConf(name string, v float64) {
	if v != v { // NaN
		v = 0
	}
	v = max(0, min(1, v))
	a.s(" " + name + `="` + strconv.FormatFloat(v, 'f', 3, 64) + `"`)
}

func (a *altoWriter) box(b Box) {
	a.attrInt("HPOS", b.X)
	a.attrInt("VPOS", b.Y)
	a.attrInt("WIDTH", b.W)
	a.attrInt("HEIGHT", b.H)
}
