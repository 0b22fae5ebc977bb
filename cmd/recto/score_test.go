package main

import (
	"context"
	"encoding/json"
	"flag"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/score")

// runScoreCmd runs the command tree with args (through the shared
// runRecto) and returns its stdout, stderr with the final error appended as
// main would print it, and the exit status exitCode maps the error to.
func runScoreCmd(t *testing.T, args ...string) (stdout, stderr string, code int) {
	t.Helper()
	stdout, stderr, err := runRecto(t, args...)
	if err != nil {
		stderr += "recto: " + err.Error() + "\n"
	}
	return stdout, stderr, exitCodeQuiet(err)
}

// exitCodeQuiet maps err like exitCode without printing.
func exitCodeQuiet(err error) int {
	return exitCode(context.Background(), io.Discard, "recto score", err)
}

const collection = "../../testdata/score/collection"

// golden compares got with testdata/score/name, or rewrites it under -update.
func golden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("../../testdata/score", name)
	if *update {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if got != string(want) {
		gl, wl := strings.Split(got, "\n"), strings.Split(string(want), "\n")
		for i := range max(len(gl), len(wl)) {
			var g, w string
			if i < len(gl) {
				g = gl[i]
			}
			if i < len(wl) {
				w = wl[i]
			}
			if g != w {
				t.Fatalf("%s differs from the golden file at line %d:\n got: %q\nwant: %q\n(run go test -update after checking the change)", name, i+1, g, w)
			}
		}
	}
}

// TestScoreCollection scores the fixture collection, which holds every kind
// of bad input the command must survive, in all three formats.
func TestScoreCollection(t *testing.T) {
	args := []string{"score", "--truth", collection + "/truth", "--ocr", collection + "/ocr"}
	for _, tt := range []struct {
		name, golden string
		extra        []string
	}{
		{"json", "collection.json", []string{"--format", "json", "--confusions", "10"}},
		{"json plain", "collection-plain.json", []string{"--format", "json", "--plain-typography", "--fold-case", "--ignore-punct"}},
		{"csv", "collection.csv", []string{"--format", "csv"}},
		{"table", "collection.txt", []string{"--confusions", "5"}},
	} {
		t.Run(tt.name, func(t *testing.T) {
			stdout, stderr, code := runScoreCmd(t, append(args, tt.extra...)...)
			if code != exitPartial {
				t.Errorf("exit status %d, want %d (partial); stderr:\n%s", code, exitPartial, stderr)
			}
			golden(t, tt.golden, stdout)
			// One line per bad file, naming it (quoted) and the problem.
			for _, want := range []string{
				`reference "../../testdata/score/collection/truth/harbour-gazette/1902/p0003.txt": is not UTF-8 at byte offset 37: looks like Latin-1: convert with iconv -f latin1 -t utf-8`,
				`reference "../../testdata/score/collection/truth/harbour-gazette/plate.txt": is a directory`,
				`hypothesis "../../testdata/score/collection/ocr/corvane-ledger/p0003.txt": is a directory`,
				`hypothesis "../../testdata/score/collection/ocr/harbour-gazette/1902/p0002.txt" is missing`,
				`hypothesis "../../testdata/score/collection/ocr/harbour-gazette/1902/p0005.txt" has no reference`,
			} {
				if strings.Count(stderr, want) != 1 {
					t.Errorf("stderr does not say once %q:\n%s", want, stderr)
				}
			}
			if strings.Contains(stdout, "recto score:") {
				t.Error("messages leaked onto stdout")
			}
		})
	}
}

// TestScoreJSONShape checks the JSON contract independently of the golden
// file: keys, null CER for an empty reference, the hand-counted errors of
// the vendored page, NFC/NFD equality and the missing/unmatched lists.
func TestScoreJSONShape(t *testing.T) {
	stdout, _, _ := runScoreCmd(t, "score", "--truth", collection+"/truth", "--ocr", collection+"/ocr", "--format", "json")
	var doc map[string]json.RawMessage
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatalf("output is not one JSON document: %v", err)
	}
	for _, k := range []string{"normalization", "pages", "titles", "total"} {
		if _, ok := doc[k]; !ok {
			t.Errorf("missing key %q", k)
		}
	}
	var pages []map[string]any
	json.Unmarshal(doc["pages"], &pages)
	byPage := map[string]map[string]any{}
	for _, p := range pages {
		byPage[p["page"].(string)] = p
		for _, k := range []string{"title", "page", "chars", "char_errors", "cer", "words", "word_errors", "wer"} {
			if _, ok := p[k]; !ok {
				t.Errorf("page %v lacks %q", p["page"], k)
			}
		}
	}
	if p := byPage["harbour-gazette/1902/p0004"]; p == nil || p["cer"] != nil || p["chars"].(float64) != 0 {
		t.Errorf("empty reference: %v, want cer null", p)
	}
	// phototest.txt (Tesseract test data) against its hand-degraded copy:
	// forrnat (m→rn), 1azy (l→1), Tbe (h→b), jurnped (m→rn), ovcr (e→c),
	// "fox," (.→,) — 8 character edits, 6 word edits, counted by hand.
	if p := byPage["phototest"]; p == nil || p["title"] != "truth" || p["char_errors"].(float64) != 8 || p["word_errors"].(float64) != 6 {
		t.Errorf("phototest: %v, want title truth, 8 char and 6 word errors", p)
	}
	if p := byPage["harbour-gazette/1902/p0001"]; p == nil || p["char_errors"].(float64) != 0 {
		t.Errorf("NFD reference against NFC hypothesis: %v, want 0 errors", p)
	}
	if p := byPage["corvane-ledger/p0003"]; p == nil || p["status"] != "failed" || p["cer"].(float64) != 1 {
		t.Errorf("hypothesis that is a directory: %v, want status failed and CER 1", p)
	}
	if _, ok := byPage["harbour-gazette/1902/p0003"]; ok {
		t.Error("a reference with invalid UTF-8 was scored")
	}
	var missing, unmatched []string
	json.Unmarshal(doc["missing"], &missing)
	json.Unmarshal(doc["unmatched"], &unmatched)
	if len(missing) != 1 || missing[0] != "harbour-gazette/1902/p0002" {
		t.Errorf("missing = %q", missing)
	}
	if len(unmatched) != 1 || unmatched[0] != "harbour-gazette/1902/p0005.txt" {
		t.Errorf("unmatched = %q", unmatched)
	}
}

// TestScoreClean: a collection without problems exits 0.
func TestScoreClean(t *testing.T) {
	dir := t.TempDir()
	write(t, filepath.Join(dir, "gt", "vol1", "p1.txt"), "The Vellmouth tide tables.")
	write(t, filepath.Join(dir, "ocr", "vol1", "p1.txt"), "The Vellrnouth tide tables.")
	stdout, stderr, code := runScoreCmd(t, "score", "--truth", filepath.Join(dir, "gt"), "--ocr", filepath.Join(dir, "ocr"), "--confusions", "3")
	if code != exitOK || stderr != "" {
		t.Fatalf("exit %d, stderr %q", code, stderr)
	}
	for _, want := range []string{"Normalisation: NFC", "vol1/p1", "7.69%", "m→rn"} {
		if !strings.Contains(stdout, want) {
			t.Errorf("table lacks %q:\n%s", want, stdout)
		}
	}
}

// TestScoreUnreadable: files that exist but cannot be read (a dangling
// link; a file without read permission when not running as root).
func TestScoreUnreadable(t *testing.T) {
	dir := t.TempDir()
	write(t, filepath.Join(dir, "gt", "a", "good.txt"), "good page")
	write(t, filepath.Join(dir, "ocr", "a", "good.txt"), "good page")
	if err := os.Symlink(filepath.Join(dir, "nowhere.txt"), filepath.Join(dir, "gt", "a", "link.txt")); err != nil {
		t.Skipf("cannot make a symbolic link: %v", err)
	}
	write(t, filepath.Join(dir, "ocr", "a", "link.txt"), "x")
	locked := os.Geteuid() != 0
	if locked {
		write(t, filepath.Join(dir, "gt", "a", "locked.txt"), "secret")
		write(t, filepath.Join(dir, "ocr", "a", "locked.txt"), "secret")
		os.Chmod(filepath.Join(dir, "gt", "a", "locked.txt"), 0)
	} else {
		t.Log("running as root: permission bits do not stop reads, so only the dangling link is checked")
	}
	stdout, stderr, code := runScoreCmd(t, "score", "--truth", filepath.Join(dir, "gt"), "--ocr", filepath.Join(dir, "ocr"), "--format", "csv")
	if code != exitPartial {
		t.Errorf("exit %d, want %d", code, exitPartial)
	}
	if !strings.Contains(stderr, `link.txt": no such file or directory`) {
		t.Errorf("stderr does not name the dangling link:\n%s", stderr)
	}
	if locked && !strings.Contains(stderr, `locked.txt": permission denied`) {
		t.Errorf("stderr does not name the locked file:\n%s", stderr)
	}
	if !strings.Contains(stdout, "a,a/good,ok,9,0,0,2,0,0,0,0,0,0,\"NFC") {
		t.Errorf("the good page was not scored:\n%s", stdout)
	}
}

func TestScoreUsageAndFailure(t *testing.T) {
	empty := t.TempDir()
	tests := []struct {
		name string
		args []string
		code int
		msg  string
	}{
		{"no truth", []string{"score", "--ocr", "x"}, exitUsage, "--truth is required"},
		{"no ocr", []string{"score", "--truth", "x"}, exitUsage, "--ocr is required"},
		{"bad format", []string{"score", "--truth", "x", "--ocr", "y", "--format", "xml"}, exitUsage, `--format "xml"`},
		{"negative confusions", []string{"score", "--truth", "x", "--ocr", "y", "--confusions", "-1"}, exitUsage, "--confusions -1"},
		{"csv confusions", []string{"score", "--truth", "x", "--ocr", "y", "--format", "csv", "--confusions", "3"}, exitUsage, "not available with --format csv"},
		{"unknown flag", []string{"score", "--colour"}, exitUsage, "unknown flag"},
		{"extra argument", []string{"score", "--truth", "x", "--ocr", "y", "z"}, exitUsage, "unknown command"},
		{"truth absent", []string{"score", "--truth", filepath.Join(empty, "none"), "--ocr", empty}, exitFailure, "--truth \"" + filepath.Join(empty, "none") + "\": no such folder"},
		{"truth empty", []string{"score", "--truth", empty, "--ocr", empty}, exitFailure, "no reference pages"},
		{"truth is a file", []string{"score", "--truth", collection + "/truth/phototest.txt", "--ocr", empty}, exitFailure, "is a file, not a folder"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			stdout, stderr, code := runScoreCmd(t, tt.args...)
			if code != tt.code || !strings.Contains(stderr, tt.msg) {
				t.Errorf("exit %d, stderr %q; want exit %d and %q", code, stderr, tt.code, tt.msg)
			}
			if stdout != "" && tt.code != exitUsage {
				t.Errorf("stdout on failure: %q", stdout)
			}
		})
	}
}

func TestScoreHelp(t *testing.T) {
	stdout, _, code := runScoreCmd(t, "score", "--help")
	if code != exitOK {
		t.Fatalf("exit %d", code)
	}
	for _, want := range []string{"NFC", "--fold-case", "--ignore-punct", "--plain-typography", "json", "csv",
		"EXIT STATUS", "3    partial", "bootstrap", "2000 resamples"} {
		if !strings.Contains(stdout, want) {
			t.Errorf("help lacks %q", want)
		}
	}
}

func write(t testing.TB, path, text string) {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestScoreSaysWhenFlexIsSkipped: a ground truth too long for the
// order-free matching (a whole volume in one file, issue #16) is scored,
// and the command says that its flex_cer is only an upper bound.
func TestScoreSaysWhenFlexIsSkipped(t *testing.T) {
	truth, ocrDir := t.TempDir(), t.TempDir()
	line := "The ferry from Halvik left at nine and came back at noon.\n"
	volume := strings.Repeat(line, (1<<20)/len(line)+100) // more than 1,048,576 characters
	if err := os.WriteFile(filepath.Join(truth, "volume.txt"), []byte(volume), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(ocrDir, "volume.txt"), []byte("The ferry from Halvik left at nlne."), 0o644); err != nil {
		t.Fatal(err)
	}
	out, stderr, err := runRecto(t, "score", "--truth", truth, "--ocr", ocrDir, "--format", "csv")
	if err != nil {
		t.Fatalf("score: %v\n%s", err, stderr)
	}
	if !strings.Contains(stderr, `page "volume": too long for the order-free matching`) {
		t.Errorf("stderr does not say the flexible matching was skipped:\n%s", stderr)
	}
	if !strings.Contains(out, "volume") {
		t.Errorf("the page is not in the report:\n%s", out)
	}
}
