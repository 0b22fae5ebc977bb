package ocr

import (
	"bufio"
	"encoding/xml"
	"io"
	"path/filepath"
	"runtime/debug"
	"strconv"
	"strings"
)

// ALTO v4 identifiers written into every document.
const (
	ALTONamespace      = "http://www.loc.gov/standards/alto/ns-v4#"
	ALTOSchemaLocation = "http://www.loc.gov/standards/alto/v4/alto-4-4.xsd"
	ALTOSchemaVersion  = "4.4"
)

// SoftwareVersion is recto's version as written into the ALTO Processing
// description; the command sets it from its build, else the module's build
// information is used ("devel" when there is none).
var SoftwareVersion = buildVersion()

func buildVersion() string {
	if bi, ok := debug.ReadBuildInfo(); ok && bi.Main.Version != "" && bi.Main.Version != "(devel)" {
		return bi.Main.Version
	}
	return "devel"
}

// EngineInfo names a recognition engine for the ALTO Processing
// description.
type EngineInfo struct {
	Name     string `json:"name"`     // "Tesseract"
	Version  string `json:"version"`  // the engine's own version string
	Settings string `json:"settings"` // the settings that change its reading, "lang=eng psm=3"
}

// EngineDescriber is implemented by engines that can name themselves;
// Process records the description in Record.Engine.
type EngineDescriber interface {
	Describe() EngineInfo
}

// ALTOStep is a processing step the record does not hold, such as
// correction.
type ALTOStep struct {
	Description []string // what was done, one item per step (processingStepDescription)
	Settings    string   // the settings that change the result (processingStepSettings)
	Software    string   // softwareName; "" means recto
	Version     string   // softwareVersion; "" means SoftwareVersion
}

// ALTOOptions adds to the ALTO document what the record does not hold.
type ALTOOptions struct {
	// Accuracy, when HasAccuracy, is the page's quality estimate as an
	// estimated percentage of characters read right, 100 × (1 − predicted
	// CER), written as Page@ACCURACY (0–100).
	Accuracy    float64
	HasAccuracy bool
	// Correction is the correction step, when the text was corrected.
	Correction *ALTOStep
}

// WriteALTO writes rec as an ALTO document with no options (WriteALTOWith).
func WriteALTO(w io.Writer, rec *Record) error { return WriteALTOWith(w, rec, ALTOOptions{}) }

// WriteALTOWith writes rec as an ALTO v4 document (schema version 4.4; it
// validates against alto-4-4.xsd): one Page holding a PrintSpace with one
// TextBlock per engine block (Word.Block, e.g. a column), one TextLine per
// line and one String per word, in the engine's reading order, with
// HPOS/VPOS/WIDTH/HEIGHT in pixels of the original image (MeasurementUnit
// "pixel"), WC the word confidence in [0, 1], and each of Word.Alt as an
// ALTERNATIVE element. CC (character confidence) is not written: the
// engine's reading gives no per-character confidence.
//
// Page@PC is the engine's mean word confidence (the schema: "confidence
// level of the ocr for this page", 0 unsure to 1 sure); Page@ACCURACY is
// o.Accuracy, the quality estimate ("estimated percentage of OCR
// accuracy", 0–100), when given. Description/Processing holds one element
// per step, referenced from Page@PROCESSINGREFS: "preparation"
// (preOperation: binarisation, threshold, skew, resolution, noise),
// "recognition" (contentGeneration: the engine's name, version and
// settings from Record.Engine, the language and the self-check of
// Record.Reading: which reading was kept and both scores) and, with
// o.Correction, "correction" (contentModification).
//
// The output is deterministic: it carries no date, so equal records give
// equal files. Package ocr/alto is the documented entry point; this
// function exists because WriteOutputs needs it and ocr/alto imports ocr.
func WriteALTOWith(w io.Writer, rec *Record, o ALTOOptions) error {
	bw := bufio.NewWriter(w)
	a := altoWriter{w: bw}
	a.s(`<?xml version="1.0" encoding="UTF-8"?>` + "\n")
	a.s(`<alto xmlns="` + ALTONamespace + `" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance" xsi:schemaLocation="` +
		ALTONamespace + ` ` + ALTOSchemaLocation + `" SCHEMAVERSION="` + ALTOSchemaVersion + `">` + "\n")
	a.s("  <Description>\n    <MeasurementUnit>pixel</MeasurementUnit>\n")
	if rec.Source != "" {
		a.s("    <sourceImageInformation>\n      <fileName>")
		a.esc(filepath.ToSlash(rec.Source))
		a.s("</fileName>\n    </sourceImageInformation>\n")
	}
	refs := []string{"preparation", "recognition"}

	// Preparation.
	prep := ALTOStep{Settings: "binarization=" + orNone(rec.Binarization) + " threshold=" + strconv.Itoa(rec.Threshold) +
		" skew_degrees=" + strconv.FormatFloat(rec.Skew, 'f', 2, 64) + " dpi=" + strconv.FormatFloat(rec.DPI, 'f', -1, 64) +
		" dpi_source=" + orNone(rec.DPISource) + " dpi_tagged=" + strconv.FormatFloat(rec.TaggedDPI, 'f', -1, 64) +
		" dpi_estimated=" + strconv.FormatFloat(rec.EstimatedDPI, 'f', -1, 64) +
		" noise=" + strconv.FormatFloat(rec.Noise, 'f', 2, 64)}
	if d := resolutionDescription(rec); d != "" {
		prep.Description = append(prep.Description, d)
	}
	if rec.Binarization != "" && rec.Binarization != "none" {
		prep.Description = append(prep.Description, "binarisation ("+rec.Binarization+")")
	}
	if rec.Skew != 0 {
		prep.Description = append(prep.Description, "deskew ("+strconv.FormatFloat(rec.Skew, 'f', 2, 64)+" degrees)")
	}
	if rec.Reading != nil && rec.Reading.Kept == "original" {
		prep.Description = append(prep.Description, "not used for the text: the self-check kept the reading of the original page")
	}
	if rec.Blank {
		prep.Description = append(prep.Description, "no ink worth recognising was found (blank page)")
	}
	if ori := rec.Orientation; ori != nil {
		conf := strconv.FormatFloat(ori.Confidence, 'f', 1, 64)
		switch {
		case !ori.Decided:
			prep.Description = append(prep.Description, "orientation undecided (confidence "+conf+"): read as it is")
		case ori.Degrees != 0:
			prep.Description = append(prep.Description, "orientation: text found turned "+strconv.Itoa(ori.Degrees)+
				" degrees clockwise (confidence "+conf+"); read upright, positions given on the original image")
		default:
			prep.Description = append(prep.Description, "orientation: upright (confidence "+conf+")")
		}
		prep.Settings += " orientation_degrees=" + strconv.Itoa(ori.Degrees) + " orientation_confidence=" + conf +
			" orientation_decided=" + strconv.FormatBool(ori.Decided)
	}
	a.step("preparation", "preOperation", prep)

	// Recognition.
	recog := ALTOStep{Software: "engine not recorded", Description: []string{"text recognition"}}
	settings := "lang=" + orNone(rec.Lang)
	if rec.Engine != nil {
		recog.Software, recog.Version = rec.Engine.Name, rec.Engine.Version
		if rec.Engine.Settings != "" {
			settings = rec.Engine.Settings
		}
		if recog.Version == "" {
			recog.Version = "unknown"
		}
	}
	if r := rec.Reading; r != nil {
		recog.Description = append(recog.Description, readingDescription(r))
		settings += " self_check=on"
	}
	recog.Settings = settings
	a.step("recognition", "contentGeneration", recog)

	if o.Correction != nil {
		a.step("correction", "contentModification", *o.Correction)
		refs = append(refs, "correction")
	}
	a.s("  </Description>\n")
	a.s("  <Layout>\n")
	a.s(`    <Page ID="page1" PHYSICAL_IMG_NR="1"`)
	a.attrInt("WIDTH", rec.Width)
	a.attrInt("HEIGHT", rec.Height)
	a.s(` PROCESSINGREFS="` + strings.Join(refs, " ") + `"`)
	if len(rec.Words) > 0 {
		a.attrConf("PC", rec.MeanConfidence)
	}
	if ori := rec.Orientation; ori != nil && ori.Decided && ori.Degrees%360 != 0 {
		// ALTO 4.4 Page@ROTATION: the default rotation of the text on the
		// page, in degrees counter-clockwise; Degrees is clockwise.
		a.attrInt("ROTATION", (360-ori.Degrees%360)%360)
	}
	if o.HasAccuracy {
		v := o.Accuracy
		if v != v { // NaN
			v = 0
		}
		a.s(` ACCURACY="` + strconv.FormatFloat(max(0, min(100, v)), 'f', 1, 64) + `"`)
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

// resolutionDescription says where the page's resolution came from
// (Record.DPISource), with the tag and the estimate beside it; "" in
// records that do not say.
func resolutionDescription(rec *Record) string {
	d := strconv.FormatFloat(rec.DPI, 'f', -1, 64) + " dpi"
	est := ""
	if rec.EstimatedDPI > 0 {
		est = "; estimated from the size of the text: " + strconv.FormatFloat(rec.EstimatedDPI, 'f', -1, 64) + " dpi"
	}
	tag := "the file has no resolution tag"
	if rec.TaggedDPI > 0 {
		tag = "the file's tag says " + strconv.FormatFloat(rec.TaggedDPI, 'f', -1, 64) + " dpi"
	}
	switch rec.DPISource {
	case DPIFromTag:
		return "resolution " + d + " from the file's tag" + est
	case DPIFromEstimate:
		return "resolution " + d + " estimated from the size of the text (" + tag + ")"
	case DPIFromOption:
		return "resolution " + d + " as given for files without a tag (--dpi; " + tag + est + ")"
	case DPIDefault:
		return "resolution " + d + " assumed (" + tag + est + ")"
	}
	return ""
}

// readingDescription describes the self-check of a page: which reading
// was kept, why the original page was read too, and both readings'
// figures, quality estimates included when there were any.
func readingDescription(r *Reading) string {
	d := "self-check: the reading of the " + r.Kept + " page was kept (kept=" + r.Kept +
		" prepared_score=" + strconv.Itoa(r.PreparedScore) + " original_score=" + strconv.Itoa(r.OriginalScore) +
		": letters and digits in confidently read words; prepared_words=" + strconv.Itoa(r.PreparedWords) +
		" original_words=" + strconv.Itoa(r.OriginalWords) + ": confidently read words of three letters or more"
	if r.PreparedPredictedCER != nil && r.OriginalPredictedCER != nil {
		d += "; prepared_predicted_cer=" + strconv.FormatFloat(*r.PreparedPredictedCER, 'f', 4, 64) +
			" original_predicted_cer=" + strconv.FormatFloat(*r.OriginalPredictedCER, 'f', 4, 64) + ": the quality estimate of each reading"
	}
	d += ")"
	if r.Reason != "" {
		d += "; the original page was read too: " + r.Reason
	}
	return d
}

// step writes one Processing element; an empty software name is recto.
func (a *altoWriter) step(id, category string, st ALTOStep) {
	if st.Software == "" {
		st.Software = "recto"
	}
	if st.Version == "" && st.Software == "recto" {
		st.Version = SoftwareVersion
	}
	a.s(`    <Processing ID="` + id + `">` + "\n")
	a.s("      <processingCategory>" + category + "</processingCategory>\n")
	for _, d := range st.Description {
		a.s("      <processingStepDescription>")
		a.esc(d)
		a.s("</processingStepDescription>\n")
	}
	if st.Settings != "" {
		a.s("      <processingStepSettings>")
		a.esc(st.Settings)
		a.s("</processingStepSettings>\n")
	}
	a.s("      <processingSoftware>\n        <softwareName>")
	a.esc(st.Software)
	a.s("</softwareName>\n")
	if st.Version != "" {
		a.s("        <softwareVersion>")
		a.esc(st.Version)
		a.s("</softwareVersion>\n")
	}
	a.s("      </processingSoftware>\n    </Processing>\n")
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
