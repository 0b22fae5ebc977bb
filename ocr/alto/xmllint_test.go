package alto_test

import (
	"bytes"
	"encoding/xml"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"recto/ocr"
	"recto/ocr/alto"
)

// The official ALTO 4.4 schema (ALTO Editorial Board, ALTO XML Schema
// version 4.4, 2023, CC BY-SA 4.0), vendored with a local xlink schema so
// that xmllint never uses the network (testdata/SOURCES.md).
var altoXSD = filepath.Join("..", "..", "testdata", "standards", "alto-4-4.xsd")

// xmllint validates doc against the ALTO 4.4 schema with Debian's xmllint
// (libxml2-utils) and returns its complaint, or "" when valid.
func xmllint(t *testing.T, doc []byte) string {
	t.Helper()
	if _, err := exec.LookPath("xmllint"); err != nil {
		t.Skip("xmllint not installed (Debian libxml2-utils; scripts/setup --test)")
	}
	p := filepath.Join(t.TempDir(), "doc.xml")
	if err := os.WriteFile(p, doc, 0o644); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command("xmllint", "--noout", "--nonet", "--schema", altoXSD, p).CombinedOutput()
	if err != nil {
		return strings.TrimSpace(string(out))
	}
	return ""
}

// documents returns one ALTO document for every kind of page recto writes:
// words with alternatives and characters XML cannot carry, an empty page,
// a blank page, a page whose self-check kept the original reading, a page
// read by a named engine, and a corrected page with the quality estimate.
func documents(t *testing.T) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	write := func(name string, rec *ocr.Record, o alto.Options) {
		var buf bytes.Buffer
		if err := alto.WriteWith(&buf, rec, o); err != nil {
			t.Fatal(err)
		}
		out[name] = buf.Bytes()
	}
	write("words", record(), alto.Options{})
	write("empty", &ocr.Record{Width: 10, Height: 10, Words: []ocr.Word{}}, alto.Options{})
	write("blank", &ocr.Record{Width: 10, Height: 10, Blank: true, Binarization: "none"}, alto.Options{HasAccuracy: true, Accuracy: 100})
	kept := record()
	pc, oc := 0.35, 0.041
	kept.Reading = &ocr.Reading{Kept: "original", Reason: "no word read", PreparedScore: 12, OriginalScore: 40,
		PreparedWords: 2, OriginalWords: 9, PreparedPredictedCER: &pc, OriginalPredictedCER: &oc}
	kept.TaggedDPI, kept.EstimatedDPI, kept.DPISource = 72, 300, ocr.DPIFromEstimate
	kept.Engine = &ocr.EngineInfo{Name: "Tesseract", Version: "5.3.0", Settings: "lang=eng psm=3 oem=default"}
	write("self-check", kept, alto.Options{})
	write("corrected", kept, alto.Options{HasAccuracy: true, Accuracy: 92.25,
		Correction: &alto.Step{Description: []string{"lexicon-based correction of OCR confusions"}, Settings: "margin=0 keep_marks=false <&>"}})
	write("estimate out of range", record(), alto.Options{HasAccuracy: true, Accuracy: 140})
	turned := record()
	turned.Orientation = &ocr.Orientation{Degrees: 90, Confidence: 9.3, Decided: true}
	write("turned", turned, alto.Options{})
	undecided := record()
	undecided.Orientation = &ocr.Orientation{Degrees: 180, Confidence: 1.2}
	write("orientation undecided", undecided, alto.Options{})
	return out
}

// TestOrientationInALTO: a page found turned carries the text's rotation
// where ALTO 4.4 puts it, Page@ROTATION ("Default rotation for text or
// illustrations on this page. The value is in degree counterclockwise",
// alto-4-4.xsd), and the preparation step says what was found (issue 11
// part 3). recto's Orientation.Degrees is the clockwise turn of the text,
// so 90 clockwise is ROTATION 270. An undecided page has no ROTATION.
func TestOrientationInALTO(t *testing.T) {
	var d struct {
		Steps []struct {
			Desc     []string `xml:"processingStepDescription"`
			Settings string   `xml:"processingStepSettings"`
		} `xml:"Description>Processing"`
		Page struct {
			Rotation string `xml:"ROTATION,attr"`
		} `xml:"Layout>Page"`
	}
	docs := documents(t)
	if err := xml.Unmarshal(docs["turned"], &d); err != nil {
		t.Fatal(err)
	}
	if d.Page.Rotation != "270" {
		t.Errorf("ROTATION %q, want 270 (text turned 90 degrees clockwise)", d.Page.Rotation)
	}
	if p := d.Steps[0]; !strings.Contains(p.Settings, "orientation_degrees=90 orientation_confidence=9.3 orientation_decided=true") ||
		!strings.Contains(strings.Join(p.Desc, " "), "turned 90 degrees clockwise") {
		t.Errorf("preparation step does not give the orientation: %+v", p)
	}
	d.Steps, d.Page.Rotation = nil, "" // Unmarshal appends to slices
	if err := xml.Unmarshal(docs["orientation undecided"], &d); err != nil {
		t.Fatal(err)
	}
	if d.Page.Rotation != "" || !strings.Contains(strings.Join(d.Steps[0].Desc, " "), "orientation undecided (confidence 1.2): read as it is") {
		t.Errorf("undecided page: ROTATION %q, preparation %+v", d.Page.Rotation, d.Steps[0].Desc)
	}
}

// TestWriteValidatesALTO44: every kind of document written validates
// against the official schema with xmllint.
func TestWriteValidatesALTO44(t *testing.T) {
	for name, doc := range documents(t) {
		if msg := xmllint(t, doc); msg != "" {
			t.Errorf("%s: not valid ALTO 4.4:\n%s\n%s", name, msg, doc)
		}
	}
}

// TestXmllintCanFail: the validation above is not vacuous: a document
// written by recto and then broken in ways the schema forbids is refused.
func TestXmllintCanFail(t *testing.T) {
	doc := documents(t)["words"]
	for name, bad := range map[string]string{
		"WC above 1 (WCType maxInclusive 1)": strings.Replace(string(doc), `WC="0.930"`, `WC="1.5"`, 1),
		"PC above 1 (PCType maxInclusive 1)": strings.Replace(string(doc), `PC="0.700"`, `PC="70"`, 1),
		"Processing without ID (required)":   strings.Replace(string(doc), `<Processing ID="preparation">`, `<Processing>`, 1),
		"unknown processingCategory":         strings.Replace(string(doc), `>preOperation<`, `>preparation<`, 1),
	} {
		if msg := xmllint(t, []byte(bad)); msg == "" {
			t.Errorf("%s: xmllint accepted the broken document", name)
		}
	}
}

// TestProcessingAndEstimate: the steps, their links from the page, the
// self-check figures and the estimate are where ALTO 4.4 puts them.
func TestProcessingAndEstimate(t *testing.T) {
	var d struct {
		Steps []struct {
			ID       string   `xml:"ID,attr"`
			Category string   `xml:"processingCategory"`
			Desc     []string `xml:"processingStepDescription"`
			Settings string   `xml:"processingStepSettings"`
			Name     string   `xml:"processingSoftware>softwareName"`
			Version  string   `xml:"processingSoftware>softwareVersion"`
		} `xml:"Description>Processing"`
		Page struct {
			Refs     string `xml:"PROCESSINGREFS,attr"`
			PC       string `xml:"PC,attr"`
			Accuracy string `xml:"ACCURACY,attr"`
		} `xml:"Layout>Page"`
	}
	docs := documents(t)
	if err := xml.Unmarshal(docs["corrected"], &d); err != nil {
		t.Fatal(err)
	}
	if d.Page.Refs != "preparation recognition correction" || len(d.Steps) != 3 {
		t.Fatalf("page refers to %q; steps %+v", d.Page.Refs, d.Steps)
	}
	// xmllint does not resolve IDREFS: every reference must name a step.
	for i, ref := range strings.Fields(d.Page.Refs) {
		if d.Steps[i].ID != ref {
			t.Errorf("PROCESSINGREFS %q names no Processing (step %d is %q)", ref, i, d.Steps[i].ID)
		}
	}
	rec := d.Steps[1]
	if rec.Name != "Tesseract" || rec.Version != "5.3.0" || !strings.Contains(rec.Settings, "psm=3") ||
		!strings.Contains(strings.Join(rec.Desc, " "), "kept=original prepared_score=12 original_score=40") {
		t.Errorf("recognition step %+v", rec)
	}
	// Both readings' quality estimates and why the original was read
	// (issue 10 part 4), the resolution's source (part 3).
	for _, want := range []string{"prepared_words=2 original_words=9", "prepared_predicted_cer=0.3500 original_predicted_cer=0.0410",
		"read too: no word read"} {
		if !strings.Contains(strings.Join(rec.Desc, " "), want) {
			t.Errorf("recognition step does not say %q: %+v", want, rec.Desc)
		}
	}
	if p := d.Steps[0]; !strings.Contains(p.Settings, "dpi=300 dpi_source=estimate dpi_tagged=72 dpi_estimated=300") ||
		!strings.Contains(strings.Join(p.Desc, " "), "resolution 300 dpi estimated from the size of the text (the file's tag says 72 dpi)") {
		t.Errorf("preparation step does not give the resolution's source: %+v", p)
	}
	if c := d.Steps[2]; c.Category != "contentModification" || c.Name != "recto" || c.Version == "" || c.Settings != "margin=0 keep_marks=false <&>" {
		t.Errorf("correction step %+v", c)
	}
	if !strings.Contains(strings.Join(d.Steps[0].Desc, " "), "kept the reading of the original page") {
		t.Errorf("preparation step does not say it was not used: %+v", d.Steps[0])
	}
	if d.Page.Accuracy != "92.2" && d.Page.Accuracy != "92.3" {
		t.Errorf("ACCURACY %q, want 92.25 to one decimal", d.Page.Accuracy)
	}
	if pc, _ := strconv.ParseFloat(d.Page.PC, 64); pc != 0.7 {
		t.Errorf("PC %q, want the mean word confidence 0.700", d.Page.PC)
	}
	if !bytes.Contains(docs["estimate out of range"], []byte(`ACCURACY="100.0"`)) {
		t.Error("an estimate above 100 is not clamped")
	}
	if bytes.Contains(docs["words"], []byte("ACCURACY")) {
		t.Error("ACCURACY written without an estimate")
	}
}

// TestCheckAgreesWithXmllint: every document the structural checker
// refuses (TestCheckRejects) xmllint refuses too, and the one it accepts
// xmllint accepts: the checker is a subset of the schema.
func TestCheckAgreesWithXmllint(t *testing.T) {
	const head = `<alto xmlns="http://www.loc.gov/standards/alto/ns-v4#"><Description><MeasurementUnit>pixel</MeasurementUnit></Description><Layout><Page ID="p1" PHYSICAL_IMG_NR="1"><PrintSpace>`
	const tail = `</PrintSpace></Page></Layout></alto>`
	block := func(lines string) string { return head + `<TextBlock ID="b1">` + lines + `</TextBlock>` + tail }
	ok := block(`<TextLine><String CONTENT="Quay" WC="0.5"/><SP/><String CONTENT="end"/></TextLine>`)
	if msg := xmllint(t, []byte(ok)); msg != "" {
		t.Fatalf("xmllint refuses the valid document: %s", msg)
	}
	for _, doc := range []string{
		block(`<TextLine><String WC="0.5"/></TextLine>`),
		block(`<TextLine><String CONTENT="a" WC="1.5"/></TextLine>`),
		block(`<TextLine></TextLine>`),
		block(`<TextLine><SP/><String CONTENT="a"/></TextLine>`),
		block(`<TextLine><String CONTENT="a"/><SP/><SP/></TextLine>`),
		strings.Replace(ok, ` ID="b1"`, "", 1),
		block(`<TextLine ID="b1"><String CONTENT="a"/></TextLine>`),
		strings.Replace(ok, ">pixel<", ">cm<", 1),
		strings.Replace(ok, ` PHYSICAL_IMG_NR="1"`, "", 1),
	} {
		if alto.Check(strings.NewReader(doc)) == nil {
			t.Errorf("Check accepts %s", doc)
		}
		if xmllint(t, []byte(doc)) == "" {
			t.Errorf("xmllint accepts what Check refuses: %s", doc)
		}
	}
}
