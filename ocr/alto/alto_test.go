package alto_test

import (
	"bytes"
	"encoding/xml"
	"strconv"
	"strings"
	"testing"

	"recto/ocr"
	"recto/ocr/alto"
)

func record() *ocr.Record {
	return &ocr.Record{
		Version: ocr.RecordVersion, Source: `C:\scans\p&1.tif`, Width: 1000, Height: 1400, DPI: 300,
		Binarization: "sauvola", MeanConfidence: 0.7,
		Words: []ocr.Word{
			{Text: "Tidewater", Conf: 0.93, Box: ocr.Box{X: 100, Y: 100, W: 200, H: 40}, Block: 0, Line: 0},
			{Text: "Ferry", Conf: 0.88, Box: ocr.Box{X: 320, Y: 102, W: 110, H: 38}, Block: 0, Line: 0},
			{Text: "Compaпy", Conf: 0.31, Box: ocr.Box{X: 100, Y: 150, W: 180, H: 40}, Block: 0, Line: 1,
				Alt: []string{"Company", "Compahy"}},
			{Text: "<&\">\u0007", Conf: 1.7, Box: ocr.Box{X: 100, Y: 600, W: 50, H: 40}, Block: 1, Line: 2},
		},
	}
}

// parsed mirrors the parts of ALTO 4.2 (ALTO Editorial Board, ALTO XML
// Schema 4.2, 2020) that the round trip compares.
type parsed struct {
	Unit string `xml:"Description>MeasurementUnit"`
	File string `xml:"Description>sourceImageInformation>fileName"`
	Page struct {
		Width  int `xml:"WIDTH,attr"`
		Height int `xml:"HEIGHT,attr"`
		Blocks []struct {
			Lines []struct {
				Strings []struct {
					Content string   `xml:"CONTENT,attr"`
					HPos    int      `xml:"HPOS,attr"`
					VPos    int      `xml:"VPOS,attr"`
					Width   int      `xml:"WIDTH,attr"`
					Height  int      `xml:"HEIGHT,attr"`
					WC      string   `xml:"WC,attr"`
					Alts    []string `xml:"ALTERNATIVE"`
				} `xml:"String"`
			} `xml:"TextLine"`
		} `xml:"PrintSpace>TextBlock"`
	} `xml:"Layout>Page"`
}

func TestWriteRoundTrip(t *testing.T) {
	rec := record()
	var buf bytes.Buffer
	if err := alto.Write(&buf, rec); err != nil {
		t.Fatal(err)
	}
	if err := alto.Check(bytes.NewReader(buf.Bytes())); err != nil {
		t.Fatalf("output breaks the ALTO 4.2 schema: %v\n%s", err, buf.String())
	}
	var p parsed
	if err := xml.Unmarshal(buf.Bytes(), &p); err != nil {
		t.Fatal(err)
	}
	if p.Unit != "pixel" || p.File != "C:/scans/p&1.tif" && p.File != `C:\scans\p&1.tif` {
		t.Errorf("unit %q file %q", p.Unit, p.File)
	}
	if p.Page.Width != 1000 || p.Page.Height != 1400 {
		t.Errorf("page %d×%d", p.Page.Width, p.Page.Height)
	}
	if len(p.Page.Blocks) != 2 || len(p.Page.Blocks[0].Lines) != 2 || len(p.Page.Blocks[1].Lines) != 1 {
		t.Fatalf("structure: %+v", p.Page.Blocks)
	}
	i := 0
	for _, b := range p.Page.Blocks {
		for _, l := range b.Lines {
			for _, s := range l.Strings {
				w := rec.Words[i]
				want := strings.ToValidUTF8(w.Text, "")
				if i == 3 {
					want = "<&\">\uFFFD" // XML 1.0 cannot carry U+0007
				}
				if s.Content != want {
					t.Errorf("word %d CONTENT %q, want %q", i, s.Content, want)
				}
				if s.HPos != w.Box.X || s.VPos != w.Box.Y || s.Width != w.Box.W || s.Height != w.Box.H {
					t.Errorf("word %d box %d,%d %d×%d, want %+v", i, s.HPos, s.VPos, s.Width, s.Height, w.Box)
				}
				wc, _ := strconv.ParseFloat(s.WC, 64)
				if wantWC := min(w.Conf, 1); wc != float64(int(wantWC*1000+0.5))/1000 {
					t.Errorf("word %d WC %s, want %.3f", i, s.WC, wantWC)
				}
				if strings.Join(s.Alts, "|") != strings.Join(w.Alt, "|") {
					t.Errorf("word %d alternatives %q, want %q", i, s.Alts, w.Alt)
				}
				i++
			}
		}
	}
	if i != len(rec.Words) {
		t.Errorf("%d Strings, want %d", i, len(rec.Words))
	}
	// Deterministic: the same record gives the same bytes.
	var again bytes.Buffer
	alto.Write(&again, rec)
	if !bytes.Equal(buf.Bytes(), again.Bytes()) {
		t.Error("two writes of one record differ")
	}
}

func TestWriteEmptyPage(t *testing.T) {
	var buf bytes.Buffer
	if err := alto.Write(&buf, &ocr.Record{Width: 10, Height: 10, Words: []ocr.Word{}}); err != nil {
		t.Fatal(err)
	}
	if err := alto.Check(&buf); err != nil {
		t.Errorf("page without words: %v", err)
	}
}

// TestCheckRejects: documents that break rules of the ALTO 4.2 schema
// (cited per row) are refused, so the check above can fail.
func TestCheckRejects(t *testing.T) {
	const head = `<alto xmlns="http://www.loc.gov/standards/alto/ns-v4#"><Description><MeasurementUnit>pixel</MeasurementUnit></Description><Layout><Page ID="p1" PHYSICAL_IMG_NR="1"><PrintSpace>`
	const tail = `</PrintSpace></Page></Layout></alto>`
	block := func(lines string) string { return head + `<TextBlock ID="b1">` + lines + `</TextBlock>` + tail }
	ok := block(`<TextLine><String CONTENT="Quay" WC="0.5"/><SP/><String CONTENT="end"/></TextLine>`)
	if err := alto.Check(strings.NewReader(ok)); err != nil {
		t.Fatalf("valid document refused: %v", err)
	}
	cases := []struct{ name, doc, want string }{
		{"not XML", `<alto`, "well-formed"},
		{"ALTO v3 namespace", strings.Replace(ok, "ns-v4", "ns-v3", 1), "root element"},
		{"String without CONTENT (StringType: CONTENT required)", block(`<TextLine><String WC="0.5"/></TextLine>`), "CONTENT"},
		{"WC above 1 (WCType: maxInclusive 1)", block(`<TextLine><String CONTENT="a" WC="1.5"/></TextLine>`), "WC"},
		{"WC in percent form", block(`<TextLine><String CONTENT="a" WC="95%"/></TextLine>`), "WC"},
		{"empty TextLine (String maxOccurs unbounded, min 1)", block(`<TextLine></TextLine>`), "at least one String"},
		{"SP first in a line", block(`<TextLine><SP/><String CONTENT="a"/></TextLine>`), "String"},
		{"two SP in a row", block(`<TextLine><String CONTENT="a"/><SP/><SP/></TextLine>`), "not allowed"},
		{"TextBlock without ID (BlockType: ID required)", strings.Replace(ok, ` ID="b1"`, "", 1), "ID"},
		{"duplicate ID (xsd:ID)", block(`<TextLine ID="b1"><String CONTENT="a"/></TextLine>`), "twice"},
		{"ID starting with a digit (xsd:ID is an NCName)", strings.Replace(ok, `ID="b1"`, `ID="1b"`, 1), "XML name"},
		{"HPOS not a float", block(`<TextLine HPOS="ten"><String CONTENT="a"/></TextLine>`), "xsd:float"},
		{"unknown attribute", block(`<TextLine><String CONTENT="a" CONF="3"/></TextLine>`), "not allowed"},
		{"measurement unit cm", strings.Replace(ok, ">pixel<", ">cm<", 1), "MeasurementUnit"},
		{"no MeasurementUnit (minOccurs 1)", strings.Replace(ok, "<MeasurementUnit>pixel</MeasurementUnit>", "", 1), "MeasurementUnit"},
		{"Page without PHYSICAL_IMG_NR", strings.Replace(ok, ` PHYSICAL_IMG_NR="1"`, "", 1), "PHYSICAL_IMG_NR"},
		{"no Layout", `<alto xmlns="http://www.loc.gov/standards/alto/ns-v4#"></alto>`, "Layout"},
		{"ALTERNATIVE before Shape", block(`<TextLine><String CONTENT="a"><ALTERNATIVE>b</ALTERNATIVE><Shape/></String></TextLine>`), "not allowed"},
		{"text inside String (mixed=false)", block(`<TextLine><String CONTENT="a">a</String></TextLine>`), "text content"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			err := alto.Check(strings.NewReader(c.doc))
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("Check = %v, want an error mentioning %q", err, c.want)
			}
		})
	}
}
