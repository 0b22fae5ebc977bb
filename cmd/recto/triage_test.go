package main

import (
	"encoding/csv"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"recto/ocr"
)

// writeRecord writes a page record whose words are the words of text, all
// with confidence conf.
func writeRecord(t *testing.T, path, text string, conf float64, blank bool) {
	t.Helper()
	rec := ocr.Record{Version: ocr.RecordVersion, Source: "scans/" + filepath.Base(path) + ".tif", Width: 2480, Height: 3508, DPI: 300, Blank: blank}
	for i, line := range strings.Split(text, "\n") {
		for _, w := range strings.Fields(line) {
			rec.Words = append(rec.Words, ocr.Word{Text: w, Conf: conf, Box: ocr.Box{W: 120, H: 40}, Line: i})
		}
	}
	data, _ := json.Marshal(rec)
	os.MkdirAll(filepath.Dir(path), 0o755)
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
}

const cleanText = `The harbour master of Vellmark kept a ledger of every ship that came in
from the northern banks, with the name of her master, her cargo, and the
weather she had met on the way. In the winter of that year the ledger
records eleven ships, three of them lost with all hands, and a note in the
margin says that the lamps on the mole were lit every night until spring.`

const badText = `Tbe b@rb0ur rnast3r 0f Ve1lrn@rk k#pt a 1edg3r ;f evcry sh1p tb@t carne 1n
fr0rn tbe n0rtbern b@nks, w1tb tbe n@rne 0f h3r rn@st3r, b3r c@rg0, aud tbe
w3@tb3r sb3 b@d rn3t 0n tbe w@y. 1n tbe w1nt3r 0f tb@t y3@r tbe 1edg3r
r3c0rds 3l3v3n sb1ps, tbr33 0f tb3rn 1ost w1tb @11 b@nds, aud @ n0t3 1n tbe`

func TestTriageCommand(t *testing.T) {
	dir := t.TempDir()
	writeRecord(t, filepath.Join(dir, "ledger-1841", "p0001.json"), cleanText, 0.95, false)
	writeRecord(t, filepath.Join(dir, "ledger-1841", "p0002.json"), badText, 0.45, false)
	writeRecord(t, filepath.Join(dir, "ledger-1841", "p0003.json"), "", 0, true)
	os.WriteFile(filepath.Join(dir, "ledger-1841", "p0001.alto.xml"), []byte("<alto/>"), 0o644)
	list := filepath.Join(t.TempDir(), "rescan.csv")

	out, _, err := runRecto(t, "triage", "--format", "json", "--rescan-list", list, dir)
	if err != nil {
		t.Fatal(err)
	}
	var rep struct {
		Pages []struct {
			Title, Page, Decision string
			PredictedCER          float64 `json:"predicted_cer"`
			Reasons               []string
		}
		Titles []struct {
			Title                 string
			Pages, Accept, Rescan int
			Blank                 int
		}
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("output is not JSON: %v\n%s", err, out)
	}
	want := map[string]string{"ledger-1841/p0001": "accept", "ledger-1841/p0002": "rescan", "ledger-1841/p0003": "blank"}
	if len(rep.Pages) != 3 {
		t.Fatalf("got %d pages, want 3:\n%s", len(rep.Pages), out)
	}
	for _, p := range rep.Pages {
		if p.Title != "ledger-1841" || want[p.Page] != p.Decision || len(p.Reasons) == 0 {
			t.Errorf("page %s/%s: decision %s (%.3f), want %s; reasons %q", p.Title, p.Page, p.Decision, p.PredictedCER, want[p.Page], p.Reasons)
		}
	}
	if len(rep.Titles) != 1 || rep.Titles[0].Pages != 3 || rep.Titles[0].Rescan != 1 || rep.Titles[0].Blank != 1 {
		t.Errorf("title summary: %+v", rep.Titles)
	}
	f, err := os.Open(list)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil || len(rows) != 2 || rows[1][1] != "ledger-1841/p0002" || rows[1][2] != "scans/p0002.json.tif" {
		t.Errorf("rescan list: %q, %v", rows, err)
	}

	// Text output has the per-page table and the summary.
	out, _, err = runRecto(t, "triage", dir)
	if err != nil || !strings.Contains(out, "ledger-1841/p0002") || !strings.Contains(out, "MEAN PREDICTED CER") {
		t.Errorf("text output (%v):\n%s", err, out)
	}
}

func TestTriageBadInput(t *testing.T) {
	empty := t.TempDir()
	if _, _, err := runRecto(t, "triage", empty); err == nil || !strings.Contains(err.Error(), "no OCR pages") || !strings.Contains(err.Error(), empty) {
		t.Errorf("empty folder: %v", err)
	}
	if _, _, err := runRecto(t, "triage", filepath.Join(empty, "missing")); err == nil {
		t.Error("missing folder: no error")
	}

	// A page with only its .txt is judged from text, with a warning.
	textOnly := t.TempDir()
	os.WriteFile(filepath.Join(textOnly, "p1.txt"), []byte(cleanText), 0o644)
	out, stderr, err := runRecto(t, "triage", "--format", "json", textOnly)
	if err != nil || !strings.Contains(stderr, "no .json page record") || !strings.Contains(out, "plain text only") {
		t.Errorf("text-only page: err %v\nstderr %s\nout %s", err, stderr, out)
	}

	// One unreadable page: the others are still judged, exit status partial.
	mixed := t.TempDir()
	writeRecord(t, filepath.Join(mixed, "p1.json"), cleanText, 0.95, false)
	os.WriteFile(filepath.Join(mixed, "p2.json"), []byte("{not json"), 0o644)
	out, stderr, err = runRecto(t, "triage", "--format", "json", mixed)
	var pe *partialError
	if !errors.As(err, &pe) || pe.Failed != 1 || !strings.Contains(stderr, "p2.json") || !strings.Contains(out, `"page": "p1"`) {
		t.Errorf("bad page: err %v\nstderr %s\nout %s", err, stderr, out)
	}

	// Lexicon problems are reported with the file name.
	bad := filepath.Join(t.TempDir(), "latin1.lex")
	os.WriteFile(bad, []byte("recto-lexicon\t1\ncaf\xe9\t2\n"), 0o644)
	for _, lex := range []string{bad, filepath.Join(empty, "none.lex"), empty} {
		if _, _, err := runRecto(t, "triage", "--lexicon", lex, mixed); err == nil || !strings.Contains(err.Error(), lex) {
			t.Errorf("lexicon %q: %v", lex, err)
		}
	}
	var ue *usageError
	if _, _, err := runRecto(t, "triage", "--format", "xml", mixed); !errors.As(err, &ue) {
		t.Errorf("bad format: %v, want a usage error", err)
	}
	if _, _, err := runRecto(t, "triage", "--rescan", "0.01", "--correct", "0.05", mixed); !errors.As(err, &ue) {
		t.Errorf("correct above rescan: %v, want a usage error", err)
	}
}

// TestTriageLoosePagesAndSummary (issue 17, triage's words): pages lying
// directly in the folder given take the title of the folder their images
// lie in, as the README names the pages of a collection, not the name of
// the output folder ("ocr"); the summary's text column is left-aligned,
// its numbers right-aligned.
func TestTriageLoosePagesAndSummary(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "ocr")
	writeRecord(t, filepath.Join(dir, "p0001.json"), cleanText, 0.95, false) // image scans/p0001.json.tif
	writeRecord(t, filepath.Join(dir, "harbour-gazette-long-name", "p0002.json"), cleanText, 0.95, false)
	out, _, err := runRecto(t, "triage", dir)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(out, "\n")
	var summary []string
	for i, l := range lines {
		if strings.HasPrefix(l, "TITLE") && strings.Contains(l, "MEAN PREDICTED CER") {
			summary = lines[i : i+3]
		}
	}
	if len(summary) != 3 {
		t.Fatalf("no summary table:\n%s", out)
	}
	if !strings.HasPrefix(summary[1], "harbour-gazette-long-name ") || !strings.HasPrefix(summary[2], "scans ") {
		t.Errorf("summary rows not left-aligned titles harbour-gazette-long-name, scans:\n%s", strings.Join(summary, "\n"))
	}
	if strings.Contains(out, "\nocr ") {
		t.Errorf("a loose page was named after the output folder:\n%s", out)
	}
	// The counts end in the same column.
	if len(strings.TrimRight(summary[1], " ")) != len(strings.TrimRight(summary[2], " ")) {
		t.Errorf("numbers not right-aligned:\n%s", strings.Join(summary, "\n"))
	}
}

// TestCorrectLoosePagesTitle (issue 17 part 3): in changes.jsonl a page
// lying directly in the folder given to recto correct takes the title of
// the folder its image lies in, as triage and the README name it, not the
// OCR folder's name ("ocr"); a page in a sub-folder keeps that folder.
func TestCorrectLoosePagesTitle(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "ocr")
	writeRecord(t, filepath.Join(dir, "p0001.json"), badText, 0.45, false) // image scans/p0001.json.tif
	writeRecord(t, filepath.Join(dir, "harbour-gazette", "p0002.json"), badText, 0.45, false)
	out, _, err := runRecto(t, "correct", dir, "--dry-run")
	if err != nil {
		t.Fatal(err)
	}
	titles := map[string]string{}
	for _, line := range strings.Split(strings.TrimSpace(out), "\n") {
		var c struct{ Title, Page string }
		if err := json.Unmarshal([]byte(line), &c); err != nil {
			t.Fatalf("line %q: %v", line, err)
		}
		titles[c.Page] = c.Title
	}
	if len(titles) != 2 || titles["p0001"] != "scans" || titles["harbour-gazette/p0002"] != "harbour-gazette" {
		t.Errorf("titles by page = %v, want p0001 in scans, harbour-gazette/p0002 in harbour-gazette", titles)
	}
}
