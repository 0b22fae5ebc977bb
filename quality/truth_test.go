package quality

import (
	"context"
	"errors"
	"net/http"
	"net/http/httptest"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync/atomic"
	"testing"

	"golang.org/x/text/encoding"
	"golang.org/x/text/encoding/charmap"
	"golang.org/x/text/encoding/unicode"
	"golang.org/x/text/encoding/unicode/utf32"
)

const truthFixtures = "../testdata/truth"

// sample is a Norwegian/German line with letters outside ASCII and a
// curly-quoted phrase only Windows-1252 (not Latin-1) can hold.
const (
	latinSample = "Ærøy kirke, Grünstraße 7 — «Søndag» å"
	cp1252Quote = "\u201cBrygga\u201d \u2013 9 \u20ac"
)

func encode(t *testing.T, enc encoding.Encoding, s string) []byte {
	t.Helper()
	b, err := enc.NewEncoder().Bytes([]byte(s))
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// TestReadTruthEncodings: files written by golang.org/x/text's encoders (an
// independent implementation of the encodings) are recognised, with the
// message the issue asks for, and the iconv command of the hint (GNU libc
// iconv, another independent implementation) turns each into UTF-8 that
// reads back as the original text.
func TestReadTruthEncodings(t *testing.T) {
	dir := t.TempDir()
	utf16le := unicode.UTF16(unicode.LittleEndian, unicode.UseBOM)
	utf16be := unicode.UTF16(unicode.BigEndian, unicode.UseBOM)
	for _, tt := range []struct {
		name, text string
		data       []byte
		err        error
		hint       string
	}{
		{"utf8.txt", latinSample, []byte(latinSample), nil, ""},
		{"latin1.txt", "Ærøy kirke, Grünstraße 7, «Søndag» å", nil, ErrOtherEncoding, "looks like Latin-1: convert with iconv -f latin1 -t utf-8"},
		{"cp1252.txt", cp1252Quote, encode(t, charmap.Windows1252, cp1252Quote), ErrOtherEncoding, "looks like Windows-1252"},
		{"utf16le.txt", latinSample, encode(t, utf16le, latinSample), ErrOtherEncoding, "looks like UTF-16 (byte order mark)"},
		{"utf16be.txt", latinSample, encode(t, utf16be, latinSample), ErrOtherEncoding, "looks like UTF-16 (byte order mark)"},
		{"utf16le-nobom.txt", "Vestre Kai 4, Brygga", encode(t, unicode.UTF16(unicode.LittleEndian, unicode.IgnoreBOM), "Vestre Kai 4, Brygga"), ErrOtherEncoding, "UTF-16 little-endian without a byte order mark"},
		{"utf32.txt", latinSample, encode(t, utf32.UTF32(utf32.LittleEndian, utf32.UseBOM), latinSample), ErrOtherEncoding, "looks like UTF-32 (byte order mark)"},
		{"binary.txt", "", []byte("\x00\x01\x02\x00\x00\x00\x07"), ErrNotText, ""},
	} {
		t.Run(tt.name, func(t *testing.T) {
			data := tt.data
			if data == nil {
				data = encode(t, charmap.ISO8859_1, tt.text)
			}
			p := filepath.Join(dir, tt.name)
			if err := os.WriteFile(p, data, 0o644); err != nil {
				t.Fatal(err)
			}
			got, err := ReadTruth(p)
			if tt.err == nil {
				if err != nil || got.Text != tt.text || got.Format != FormatText {
					t.Fatalf("ReadTruth = %+v, %v; want the text", got, err)
				}
				return
			}
			var fe *FileError
			if !errors.Is(err, tt.err) || !errors.As(err, &fe) || fe.File != p || !strings.Contains(err.Error(), tt.hint) {
				t.Fatalf("ReadTruth error %v; want %v naming %s with %q", err, tt.err, p, tt.hint)
			}
			if strings.Contains(err.Error(), "invalid UTF-8 at byte offset 0") {
				t.Errorf("message %q gives only the byte offset", err)
			}
			// The hinted conversion, run as the user would.
			_, args, ok := strings.Cut(tt.hint, "convert with ")
			if !ok {
				return
			}
			if _, err := exec.LookPath("iconv"); err != nil {
				t.Skip("iconv not installed (Debian libc-bin)")
			}
			f := strings.Fields(args)
			out, err := exec.Command(f[0], append(f[1:], p)...).Output()
			if err != nil {
				t.Fatalf("%s %s: %v", args, p, err)
			}
			conv := filepath.Join(dir, "conv-"+tt.name)
			os.WriteFile(conv, out, 0o644)
			back, err := ReadTruth(conv)
			if err != nil || strings.TrimPrefix(back.Text, "\uFEFF") != tt.text {
				t.Errorf("after %s: %+v, %v; want %q", args, back, err, tt.text)
			}
		})
	}
}

// TestReadTruthLimits: a folder, a file over MaxFileSize (sparse, so the
// test writes no data) and bytes that fit no known encoding.
func TestReadTruthLimits(t *testing.T) {
	dir := t.TempDir()
	big := filepath.Join(dir, "big.txt")
	f, err := os.Create(big)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Truncate(MaxFileSize + 1); err != nil {
		t.Fatal(err)
	}
	f.Close()
	os.Mkdir(filepath.Join(dir, "folder.txt"), 0o755)
	os.WriteFile(filepath.Join(dir, "odd.txt"), []byte("ok \x81 then"), 0o644)
	for name, want := range map[string]error{"big.txt": ErrTooLarge, "folder.txt": ErrIsDirectory, "odd.txt": ErrInvalidUTF8} {
		_, err := ReadTruth(filepath.Join(dir, name))
		if !errors.Is(err, want) || !strings.Contains(err.Error(), name) {
			t.Errorf("%s: %v, want %v naming the file", name, err, want)
		}
	}
	if _, err := ReadTruth(filepath.Join(dir, "odd.txt")); !strings.Contains(err.Error(), "at byte offset 3: not UTF-8, Latin-1 or Windows-1252") {
		t.Errorf("odd.txt: %v", err)
	}
}

// TestReadTruthXML: small files written to the published schemas (the ALTO
// 4 and PAGE 2019 files validate against alto-4-4.xsd and
// page-2019-07-15.xsd, see TestTruthFixturesValidate).
func TestReadTruthXML(t *testing.T) {
	for _, tt := range []struct {
		file, format, want string
	}{
		// ReadingOrder puts block b2 first; Corv-/ane joined by SUBS_CONTENT;
		// turned-/again joined at the HYP without SUBS_CONTENT.
		{"alto4.xml", FormatALTO, "The Corvane\nmill turnedagain.\n\nSecond column."},
		{"alto2.xml", FormatALTO, "Harbour & Quay"},
		// Reading order by @index: r3 (words, lowest TextEquiv index), r2 (lines), r1 (region).
		{"page2019.xml", FormatPAGE, "Words only\n\nLine one\nline two\n\nRegion level wins."},
		{"page2010.xml", FormatPAGE, "Vestre Kai 4"},
	} {
		got, err := ReadTruth(filepath.Join(truthFixtures, tt.file))
		if err != nil {
			t.Errorf("%s: %v", tt.file, err)
			continue
		}
		if got.Format != tt.format || got.Text != tt.want {
			t.Errorf("%s: %s %q, want %s %q", tt.file, got.Format, got.Text, tt.format, tt.want)
		}
	}
}

// TestTruthFixturesValidate checks the fixtures against the official
// schemas with Debian's xmllint (libxml2-utils), without the network.
func TestTruthFixturesValidate(t *testing.T) {
	if _, err := exec.LookPath("xmllint"); err != nil {
		t.Skip("xmllint not installed (Debian libxml2-utils; scripts/setup --test)")
	}
	for file, xsd := range map[string]string{"alto4.xml": "alto-4-4.xsd", "page2019.xml": "page-2019-07-15.xsd"} {
		out, err := exec.Command("xmllint", "--noout", "--nonet", "--schema", filepath.Join("../testdata/standards", xsd), filepath.Join(truthFixtures, file)).CombinedOutput()
		if err != nil {
			t.Errorf("%s does not validate against %s: %v\n%s", file, xsd, err, out)
		}
	}
}

// TestReadTruthBadXML: malformed XML, unknown roots and namespaces, other
// declared encodings and entity declarations are refused naming the file;
// no external entity is fetched (an HTTP server counts requests, a local
// file's content never appears) and none is expanded.
func TestReadTruthBadXML(t *testing.T) {
	var hits atomic.Int32
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		hits.Add(1)
		w.Write([]byte("FETCHED"))
	}))
	defer srv.Close()
	dir := t.TempDir()
	secret := filepath.Join(dir, "secret")
	os.WriteFile(secret, []byte("SECRET"), 0o644)
	alto := `<alto xmlns="http://www.loc.gov/standards/alto/ns-v4#"><Layout><Page><PrintSpace><TextBlock><TextLine><String CONTENT="&x;"/></TextLine></TextBlock></PrintSpace></Page></Layout></alto>`
	for name, tt := range map[string]struct{ data, want string }{
		"malformed.xml":   {`<?xml version="1.0"?><alto xmlns="http://www.loc.gov/standards/alto/ns-v4#"><Layout>`, "malformed XML"},
		"mismatch.xml":    {`<alto><Layout></alto>`, "malformed XML at line 1"},
		"root.xml":        {`<?xml version="1.0"?><TEI xmlns="http://www.tei-c.org/ns/1.0"><text/></TEI>`, `unknown root element "TEI"`},
		"altons.xml":      {`<alto xmlns="http://example.org/alto"/>`, "not ALTO version 2, 3 or 4"},
		"page2009.xml":    {`<PcGts xmlns="http://schema.primaresearch.org/PAGE/gts/pagecontent/2009-03-16"/>`, "not a PAGE namespace of 2010 to 2019"},
		"latin1decl.xml":  {`<?xml version="1.0" encoding="ISO-8859-1"?><alto xmlns="http://www.loc.gov/standards/alto/ns-v4#"/>`, `declares encoding "ISO-8859-1"`},
		"file-entity.xml": {`<?xml version="1.0"?><!DOCTYPE alto [<!ENTITY x SYSTEM "file://` + secret + `">]>` + alto, "declares entities"},
		"http-entity.xml": {`<?xml version="1.0"?><!DOCTYPE alto [<!ENTITY x SYSTEM "` + srv.URL + `/x">]>` + alto, "declares entities"},
		"param.xml":       {`<?xml version="1.0"?><!DOCTYPE alto [<!ENTITY % p SYSTEM "` + srv.URL + `/p"> %p;]>` + alto, "declares entities"},
		"dtd.xml":         {`<?xml version="1.0"?><!DOCTYPE alto SYSTEM "` + srv.URL + `/alto.dtd">` + alto, "external DTD"},
		"laughs.xml":      {`<?xml version="1.0"?><!DOCTYPE alto [<!ENTITY a "haha"><!ENTITY b "&a;&a;&a;&a;&a;&a;&a;&a;">]>` + alto, "declares entities"},
		"undeclared.xml":  {alto, "malformed XML"},
		"text.xml":        {"Just text in an .xml file", "malformed XML"},
		"decl.txt":        {`<?xml version="1.0"?><alto><Layout>`, "malformed XML"},
	} {
		p := filepath.Join(dir, name)
		os.WriteFile(p, []byte(tt.data), 0o644)
		got, err := ReadTruth(p)
		if !errors.Is(err, ErrXML) || !strings.Contains(err.Error(), p) || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("%s: %+v, %v; want ErrXML naming the file with %q", name, got, err, tt.want)
		}
		if err != nil && (strings.Contains(err.Error(), "SECRET") || strings.Contains(err.Error(), "FETCHED")) {
			t.Errorf("%s: an entity was expanded: %v", name, err)
		}
	}
	if n := hits.Load(); n != 0 {
		t.Errorf("the reader fetched %d external resources", n)
	}
	// A .txt transcription that starts with "<" is text.
	p := filepath.Join(dir, "angle.txt")
	os.WriteFile(p, []byte("<illegible> word"), 0o644)
	if got, err := ReadTruth(p); err != nil || got.Format != FormatText {
		t.Errorf("angle.txt: %+v, %v; want text", got, err)
	}
}

// TestScoreDirsTruthFormats: ALTO and PAGE references are scored against
// the .txt hypotheses; a page found in two formats is one failure naming
// both files and is not scored.
func TestScoreDirsTruthFormats(t *testing.T) {
	dir := t.TempDir()
	gt, hyp := filepath.Join(dir, "gt"), filepath.Join(dir, "ocr")
	a, _ := os.ReadFile(filepath.Join(truthFixtures, "alto2.xml"))
	pg, _ := os.ReadFile(filepath.Join(truthFixtures, "page2010.xml"))
	mustWrite(t, filepath.Join(gt, "vol1", "p1.alto.xml"), string(a))
	mustWrite(t, filepath.Join(gt, "vol1", "p2.xml"), string(pg))
	mustWrite(t, filepath.Join(gt, "vol1", "p3.txt"), "Brygga")
	mustWrite(t, filepath.Join(gt, "vol1", "p3.xml"), string(pg))
	mustWrite(t, filepath.Join(hyp, "vol1", "p1.txt"), "Harbour & Quay")
	mustWrite(t, filepath.Join(hyp, "vol1", "p2.txt"), "Vestre Kai 1")
	mustWrite(t, filepath.Join(hyp, "vol1", "p3.txt"), "Brygga")
	rep, err := ScoreDirs(context.Background(), gt, hyp, DirConfig{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Pages) != 2 || rep.Pages[0].Page != "vol1/p1" || rep.Pages[0].CharErrors != 0 || rep.Pages[1].CharErrors != 1 {
		t.Errorf("pages %+v; want vol1/p1 with 0 and vol1/p2 with 1 error", rep.Pages)
	}
	if len(rep.Failed) != 1 || !errors.Is(rep.Failed[0], ErrTwoFormats) ||
		!strings.Contains(rep.Failed[0].Error(), "p3.txt") || !strings.Contains(rep.Failed[0].Error(), "p3.xml") {
		t.Errorf("failed %v; want one two-formats error naming p3.txt and p3.xml", rep.Failed)
	}
	if len(rep.Unmatched) != 0 {
		t.Errorf("unmatched %v", rep.Unmatched)
	}
}

// TestFindTruth: the lookup used by run and calibrate.
func TestFindTruth(t *testing.T) {
	dir := t.TempDir()
	mustWrite(t, filepath.Join(dir, "a.txt"), "x")
	mustWrite(t, filepath.Join(dir, "b.page.xml"), "x")
	mustWrite(t, filepath.Join(dir, "c.txt"), "x")
	mustWrite(t, filepath.Join(dir, "c.alto.xml"), "x")
	for stem, want := range map[string]string{"a": "a.txt", "b": "b.page.xml", "none": ""} {
		got, err := FindTruth(filepath.Join(dir, stem))
		if err != nil || (want == "" && got != "") || (want != "" && got != filepath.Join(dir, want)) {
			t.Errorf("FindTruth(%s) = %q, %v; want %q", stem, got, err, want)
		}
	}
	if _, err := FindTruth(filepath.Join(dir, "c")); !errors.Is(err, ErrTwoFormats) || !strings.Contains(err.Error(), "c.txt") || !strings.Contains(err.Error(), "c.alto.xml") {
		t.Errorf("FindTruth(c) error %v; want both files named", err)
	}
}

// TestLoadSamplesTruthReader: calibrate's loader reads ground truth through
// ReadTruth too: a Latin-1 file is a problem with the same message, an ALTO
// file a sample.
func TestLoadSamplesTruthReader(t *testing.T) {
	dir := t.TempDir()
	gt, hyp := filepath.Join(dir, "gt"), filepath.Join(dir, "ocr")
	mustWrite(t, filepath.Join(hyp, "v", "p1.txt"), "Harbour & Quay")
	mustWrite(t, filepath.Join(hyp, "v", "p2.txt"), "Ærøy kirke")
	a, _ := os.ReadFile(filepath.Join(truthFixtures, "alto2.xml"))
	mustWrite(t, filepath.Join(gt, "v", "p1.xml"), string(a))
	mustWrite(t, filepath.Join(gt, "v", "p2.txt"), string(encode(t, charmap.ISO8859_1, "Ærøy kirke")))
	samples, problems, err := LoadSamples(context.Background(), hyp, gt, nil, 0)
	if err != nil {
		t.Fatal(err)
	}
	_, want := ReadTruth(filepath.Join(gt, "v", "p2.txt"))
	if len(samples) != 1 || samples[0].ID != "v/p1" || samples[0].CER != 0 {
		t.Errorf("samples %+v; want v/p1 at CER 0", samples)
	}
	if len(problems) != 1 || want == nil || problems[0].Error() != want.Error() {
		t.Errorf("problems %v; want %v", problems, want)
	}
}
