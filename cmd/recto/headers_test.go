package main

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"recto/cmd/internal/run/runtest"
	"recto/ocr/synth"
)

// csvHeader returns the first record of a CSV document.
func csvHeader(t *testing.T, what, doc string) string {
	t.Helper()
	rec, err := csv.NewReader(strings.NewReader(doc)).Read()
	if err != nil {
		t.Fatalf("%s: not CSV: %v", what, err)
	}
	return strings.Join(rec, ",")
}

// jsonKeys returns the key paths of a JSON document, sorted: objects as
// a.b, array elements as a[].b (every element merged), so the shape and
// names show and the values do not.
func jsonKeys(t *testing.T, what, doc string) string {
	t.Helper()
	var v any
	if err := json.Unmarshal([]byte(doc), &v); err != nil {
		t.Fatalf("%s: not JSON: %v", what, err)
	}
	set := map[string]bool{}
	var walk func(prefix string, v any)
	walk = func(prefix string, v any) {
		switch x := v.(type) {
		case map[string]any:
			for k, e := range x {
				p := k
				if prefix != "" {
					p = prefix + "." + k
				}
				if prefix == "" || !strings.HasSuffix(prefix, "decisions") { // decision counts are keyed by decision
					set[p] = true
					walk(p, e)
				}
			}
		case []any:
			for _, e := range x {
				walk(prefix+"[]", e)
			}
		}
	}
	walk("", v)
	keys := make([]string, 0, len(set))
	for k := range set {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return strings.Join(keys, " ")
}

// jsonLinesKeys returns the keys of the first line of a JSON Lines document.
func jsonLinesKeys(t *testing.T, what, doc string) string {
	t.Helper()
	line, _, _ := strings.Cut(doc, "\n")
	if line == "" {
		t.Fatalf("%s: no line", what)
	}
	return jsonKeys(t, what, line)
}

func readFile(t *testing.T, name string) string {
	t.Helper()
	data, err := os.ReadFile(name)
	if err != nil {
		t.Fatal(err)
	}
	return string(data)
}

// TestOutputHeaders pins the column names of every CSV and the keys of
// every JSON that recto writes, in testdata/headers/outputs.txt, so that a
// change of vocabulary is deliberate: refresh with -update and list the
// change in the README's change notes. The reference is the vocabulary
// the README states (one page key title+page, a separate image column,
// status ok/missing/failed, cer/cer_low/cer_high with _before/_after).
func TestOutputHeaders(t *testing.T) {
	var lines []string
	add := func(name, header string) { lines = append(lines, name+": "+header) }
	must := func(stdout, stderr string, err error) string {
		t.Helper()
		if err != nil && exitCodeQuiet(err) != exitPartial {
			t.Fatalf("%v\n%s", err, stderr)
		}
		return stdout
	}

	// score
	sargs := []string{"score", "--truth", collection + "/truth", "--ocr", collection + "/ocr"}
	add("score --format json", jsonKeys(t, "score json", must(runRecto(t, append(sargs, "--format", "json", "--confusions", "3")...))))
	add("score --format csv", csvHeader(t, "score csv", must(runRecto(t, append(sargs, "--format", "csv")...))))

	// triage
	dir := t.TempDir()
	writeRecord(t, filepath.Join(dir, "ledger-1841", "p0001.json"), cleanText, 0.95, false)
	writeRecord(t, filepath.Join(dir, "ledger-1841", "p0002.json"), badText, 0.45, false)
	os.WriteFile(filepath.Join(dir, "ledger-1841", "p0003.json"), []byte("{broken"), 0o644)
	list := filepath.Join(t.TempDir(), "rescan.csv")
	add("triage --format json", jsonKeys(t, "triage json", must(runRecto(t, "triage", "--format", "json", "--rescan-list", list, dir))))
	add("triage --rescan-list", csvHeader(t, "rescan list", readFile(t, list)))
	add("triage --format csv", csvHeader(t, "triage csv", must(runRecto(t, "triage", "--format", "csv", dir))))

	// calibrate
	ocrDir, truthDir := makeSample(t, 40)
	model := filepath.Join(t.TempDir(), "m.json")
	add("calibrate --format json", jsonKeys(t, "calibrate json", must(runRecto(t, "calibrate", "--ocr", ocrDir, "--truth", truthDir, "-o", model, "--format", "json"))))
	add("calibrate --format csv", csvHeader(t, "calibrate csv", must(runRecto(t, "calibrate", "--ocr", ocrDir, "--truth", truthDir, "-o", model, "--format", "csv"))))
	add("calibrate --out (model)", jsonKeys(t, "calibrate model", readFile(t, model)))

	// correct
	in := correctFixture(t)
	out := filepath.Join(t.TempDir(), "corrected")
	must(runRecto(t, "correct", in, "-o", out))
	add("correct changes.jsonl", jsonLinesKeys(t, "changes.jsonl", readFile(t, filepath.Join(out, "changes.jsonl"))))

	// ocr
	fakeEngine(t, "eng")
	scans := t.TempDir()
	os.WriteFile(filepath.Join(scans, "p1.png"), []byte("not a png"), 0o644)
	var png bytes.Buffer
	if err := synth.WritePNG(&png, testPage(), 300); err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(scans, "p2.png"), png.Bytes(), 0o644)
	text := filepath.Join(t.TempDir(), "text")
	must(runRecto(t, "ocr", scans, "-o", text))
	sc := bufio.NewScanner(strings.NewReader(readFile(t, filepath.Join(text, "failures.tsv"))))
	sc.Scan()
	add("ocr failures.tsv", strings.ReplaceAll(sc.Text(), "\t", ","))
	add("ocr <page>.json (page record)", jsonKeys(t, "page record", readFile(t, filepath.Join(text, "p2.json"))))

	// run: its reports
	coll, truth := runtest.Collection(t, 2, 3, true)
	saved := testEngine
	testEngine = runtest.Engine(coll, 0)
	defer func() { testEngine = saved }()
	runDir := filepath.Join(t.TempDir(), "run")
	must(runRecto(t, "-q", "run", coll, "-o", runDir, "--truth", truth))
	for _, name := range []string{"titles.csv", "pages.csv", "rescan.csv", "failures.csv", "warnings.csv"} {
		add("run report/"+name, csvHeader(t, name, readFile(t, filepath.Join(runDir, "report", name))))
	}
	add("run report/titles.json", jsonKeys(t, "titles.json", readFile(t, filepath.Join(runDir, "report", "titles.json"))))

	// sample: its plan, from the run's pages.csv
	plan := filepath.Join(t.TempDir(), "plan.csv")
	must(runRecto(t, "sample", "--estimates", filepath.Join(runDir, "report", "pages.csv"), "-o", plan))
	add("sample --out (plan)", csvHeader(t, "plan", readFile(t, plan)))

	got := strings.Join(lines, "\n") + "\n"
	path := filepath.Join("..", "..", "testdata", "headers", "outputs.txt")
	if *update {
		os.MkdirAll(filepath.Dir(path), 0o755)
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want := readFile(t, path)
	if got != want {
		gl, wl := strings.Split(got, "\n"), strings.Split(want, "\n")
		for i := range max(len(gl), len(wl)) {
			var g, w string
			if i < len(gl) {
				g = gl[i]
			}
			if i < len(wl) {
				w = wl[i]
			}
			if g != w {
				t.Errorf("%s line %d:\n got: %s\nwant: %s", path, i+1, g, w)
			}
		}
		t.Log("refresh with go test ./cmd/recto -run OutputHeaders -update after checking, and note the change in the README")
	}
}
