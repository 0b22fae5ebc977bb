package main

import (
	"bufio"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"recto/ocr"
)

// correctFixture makes an input folder: a plain-text page, a page with a
// record and ALTO copied from the vendored heldout sample (project-generated
// synthetic data, see testdata/correct/SOURCES.md), and returns its path.
func correctFixture(t *testing.T) string {
	t.Helper()
	in := filepath.Join(t.TempDir(), "in")
	if err := os.MkdirAll(filepath.Join(in, "box1"), 0o755); err != nil {
		t.Fatal(err)
	}
	write := func(name, text string) {
		if err := os.WriteFile(filepath.Join(in, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	write("box1/p1.txt", "and so tbe whale rose\ninthe sea\n")
	src := filepath.Join("..", "..", "testdata", "correct", "heldout", "ocr", "s00296")
	for _, suf := range []string{".txt", ".json"} {
		data, err := os.ReadFile(src + suf)
		if err != nil {
			t.Fatal(err)
		}
		write("box1/p2"+suf, string(data))
	}
	rec, err := ocr.ReadRecord(src + ".json")
	if err != nil {
		t.Fatal(err)
	}
	f, err := os.Create(filepath.Join(in, "box1", "p2.alto.xml"))
	if err != nil {
		t.Fatal(err)
	}
	if err := ocr.WriteALTO(f, rec); err != nil {
		t.Fatal(err)
	}
	f.Close()
	return in
}

func TestCorrectCommand(t *testing.T) {
	in := correctFixture(t)
	before := snapshot(t, in)
	out := filepath.Join(t.TempDir(), "out")
	stdout, stderr, err := runRecto(t, "correct", in, "--out", out, "--jobs", "2")
	if err != nil {
		t.Fatalf("recto correct: %v\n%s", err, stderr)
	}
	if stdout != "" {
		t.Errorf("stdout should be empty, got %q", stdout)
	}
	got, err := os.ReadFile(filepath.Join(out, "box1", "p1.txt"))
	if err != nil || string(got) != "and so the whale rose\nin the sea\n" {
		t.Errorf("corrected p1.txt = %q, %v", got, err)
	}
	for _, name := range []string{"p2.txt", "p2.json", "p2.alto.xml"} {
		if _, err := os.Stat(filepath.Join(out, "box1", name)); err != nil {
			t.Errorf("missing output: %v", err)
		}
	}
	alto, _ := os.ReadFile(filepath.Join(out, "box1", "p2.alto.xml"))
	if !strings.Contains(string(alto), "ALTERNATIVE") {
		t.Error("corrected ALTO does not keep the engine's reading as an ALTERNATIVE")
	}
	// changes.jsonl: one object a line, with the page named.
	f, err := os.Open(filepath.Join(out, "changes.jsonl"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var lines []changeLine
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		var c changeLine
		if err := json.Unmarshal(sc.Bytes(), &c); err != nil {
			t.Fatalf("changes.jsonl line %q: %v", sc.Text(), err)
		}
		lines = append(lines, c)
	}
	if len(lines) < 3 {
		t.Fatalf("changes.jsonl has %d lines, want at least 3", len(lines))
	}
	if c := lines[0]; c.Page != "box1/p1" || c.Line != 1 || c.Column != 8 || c.Before != "tbe" || c.After != "the" || c.Score <= 0 {
		t.Errorf("first change = %+v", c)
	}
	if after := snapshot(t, in); len(after) != len(before) {
		t.Errorf("input folder changed: %d files, was %d", len(after), len(before))
	} else {
		for k, v := range before {
			if after[k] != v {
				t.Errorf("input %q was modified", k)
			}
		}
	}
}

func TestCorrectDryRun(t *testing.T) {
	in := correctFixture(t)
	out := filepath.Join(t.TempDir(), "out")
	stdout, _, err := runRecto(t, "correct", in, "--out", out, "--dry-run", "-q")
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(stdout, `"before":"tbe","after":"the"`) {
		t.Errorf("dry run output %q does not list the change", stdout)
	}
	if _, err := os.Stat(out); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("dry run created %q", out)
	}
}

// TestCorrectStrayMarks: a stray mark read between words is deleted and
// listed with an empty "after"; --keep-marks keeps it; --map-glyphs is
// accepted (what it maps depends on the model; marks_test.go checks the
// mapping itself).
func TestCorrectStrayMarks(t *testing.T) {
	in := filepath.Join(t.TempDir(), "in")
	if err := os.MkdirAll(in, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(in, "p.txt"), []byte("the whale : rose from the sea\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	stdout, _, err := runRecto(t, "correct", in, "--dry-run", "-q")
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(stdout, `"before":":","after":""`) {
		t.Errorf("dry run %q does not delete the stray", stdout)
	}
	stdout, _, err = runRecto(t, "correct", in, "--dry-run", "-q", "--keep-marks")
	if err != nil {
		t.Fatal(err)
	}
	if stdout != "" {
		t.Errorf("--keep-marks still changed: %q", stdout)
	}
	if _, _, err := runRecto(t, "correct", in, "--dry-run", "-q", "--map-glyphs"); err != nil {
		t.Errorf("--map-glyphs: %v", err)
	}
}

func TestCorrectUsageAndBadInput(t *testing.T) {
	in := correctFixture(t)
	var ue *usageError
	if _, _, err := runRecto(t, "correct", in, "--out", in); !errors.As(err, &ue) {
		t.Errorf("--out equal to IN: %v, want a usage error", err)
	}
	if _, _, err := runRecto(t, "correct", in, "--out", filepath.Join(in, "box1", "x")); !errors.As(err, &ue) {
		t.Errorf("--out inside IN: %v, want a usage error", err)
	}
	if _, _, err := runRecto(t, "correct", in); !errors.As(err, &ue) {
		t.Errorf("no --out: %v, want a usage error", err)
	}

	// A non-UTF-8 page fails alone, named; the others are corrected.
	os.WriteFile(filepath.Join(in, "box1", "bad.txt"), []byte("tbe \xff\xfe whale\n"), 0o644)
	os.WriteFile(filepath.Join(in, "box1", "empty.txt"), nil, 0o644)
	out := filepath.Join(t.TempDir(), "out")
	_, stderr, err := runRecto(t, "correct", in, "--out", out)
	var pe *partialError
	if !errors.As(err, &pe) || pe.Failed != 1 {
		t.Fatalf("err = %v, want a partial failure of one page", err)
	}
	if !strings.Contains(stderr, "bad.txt") || !strings.Contains(stderr, "not valid UTF-8") {
		t.Errorf("stderr %q does not name the bad page and the problem", stderr)
	}
	if !strings.Contains(stderr, "empty.txt") {
		t.Errorf("stderr %q does not mention the empty page", stderr)
	}
	if data, err := os.ReadFile(filepath.Join(out, "box1", "p1.txt")); err != nil || !strings.Contains(string(data), "the whale") {
		t.Errorf("good page not corrected next to a bad one: %q, %v", data, err)
	}

	// A corrupt model is a clear error naming the file.
	model := filepath.Join(t.TempDir(), "bad.model")
	os.WriteFile(model, []byte("not a model"), 0o644)
	if _, _, err := runRecto(t, "correct", in, "--dry-run", "--model", model); err == nil || !strings.Contains(err.Error(), model) || !strings.Contains(err.Error(), "not a correction model") {
		t.Errorf("corrupt model: %v", err)
	}
}

func TestCorrectTrainCommand(t *testing.T) {
	dir := t.TempDir()
	truth, ocrDir := filepath.Join(dir, "truth"), filepath.Join(dir, "ocr")
	os.MkdirAll(truth, 0o755)
	os.MkdirAll(ocrDir, 0o755)
	for i, pair := range [][2]string{
		{"the modern whale", "the rnodern whale"},
		{"some more men came", "sorne rnore rnen carne"},
		{"a dim day", "a clim clay"},
		{strings.Repeat("the whale rose ", 6), strings.Repeat("the : whale rose ", 6)},
		{strings.Repeat("and the sea fell ", 6), strings.Repeat("and the : sea fell ", 6)},
	} {
		name := string(rune('a'+i)) + ".txt"
		os.WriteFile(filepath.Join(truth, name), []byte(pair[0]), 0o644)
		os.WriteFile(filepath.Join(ocrDir, name), []byte(pair[1]), 0o644)
	}
	os.WriteFile(filepath.Join(truth, "lonely.txt"), []byte("no twin"), 0o644)
	model := filepath.Join(dir, "m.model")
	_, stderr, err := runRecto(t, "correct", "train", "--ocr", ocrDir, "--truth", truth, "--out", model)
	if err != nil {
		t.Fatalf("train: %v\n%s", err, stderr)
	}
	if !strings.Contains(stderr, "lonely.txt") {
		t.Errorf("stderr %q does not name the page without a twin", stderr)
	}
	if !strings.Contains(stderr, `1 stray marks learned ":"×12`) || !strings.Contains(stderr, "no glyph map") {
		t.Errorf("stderr %q does not summarise the 12 planted strays and the empty glyph map", stderr)
	}
	in := filepath.Join(dir, "in")
	os.MkdirAll(in, 0o755)
	os.WriteFile(filepath.Join(in, "p.txt"), []byte("the rnodern whale\n"), 0o644)
	if _, _, err := runRecto(t, "correct", in, "--dry-run", "--model", model); err != nil {
		t.Errorf("the trained model does not load: %v", err)
	}
	var ue *usageError
	if _, _, err := runRecto(t, "correct", "train", "--ocr", ocrDir); !errors.As(err, &ue) {
		t.Errorf("missing flags: %v, want a usage error", err)
	}
}
