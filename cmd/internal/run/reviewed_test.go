package run

import (
	"bytes"
	"context"
	"image"
	"image/png"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"recto/cmd/internal/run/ledger"
	"recto/ocr/synth"
)

// csvRow returns the row of table whose column col is v, as a map from
// the header.
func csvRow(table [][]string, col, v string) map[string]string {
	head := table[0]
	k := -1
	for i, h := range head {
		if h == col {
			k = i
		}
	}
	for _, r := range table[1:] {
		if k >= 0 && r[k] == v {
			m := map[string]string{}
			for i, h := range head {
				m[h] = r[i]
			}
			return m
		}
	}
	return nil
}

// TestApplyChangesRemakesCorrection: with every change kept, the engine
// text with the changes made is the corrected text the run wrote (the
// corrector's own output is the reference), on every corrected page.
func TestApplyChangesRemakesCorrection(t *testing.T) {
	coll, truth := testCollection(t, 2, 4, false)
	out := filepath.Join(t.TempDir(), "out")
	if _, stderr, err := runTest(t, Options{Collection: coll, Out: out, Truth: truth, Correct: 0.001, Rescan: 1}); err != nil {
		t.Fatal(err, stderr)
	}
	n := 0
	for _, r := range ledgerRows(t, out) {
		changes, err := ChangesOf(out, r)
		if err != nil {
			t.Fatal(err)
		}
		if len(changes) == 0 {
			continue
		}
		n++
		engine, _ := os.ReadFile(filepath.Join(out, EngineText(r)))
		corrected, _ := os.ReadFile(filepath.Join(out, finalText(r)))
		keep, _ := StandingChanges(changes, ledger.Review{})
		got, missed := ApplyChanges(string(engine), keep)
		if missed != 0 || got != string(corrected) {
			t.Errorf("%s: %d changes not found; remade text\n%q\nwant\n%q", r.Rel, missed, got, corrected)
		}
	}
	if n == 0 {
		t.Fatal("no corrected page in the test collection")
	}
}

func TestApplyChangesCases(t *testing.T) {
	for _, c := range []struct {
		name, text string
		keep       []ChangeLine
		want       string
	}{
		{"replace", "tbe cat\nsat on tbe mat\n", []ChangeLine{{Line: 2, Column: 8, Before: "tbe", After: "the"}, {Line: 1, Column: 1, Before: "tbe", After: "the"}}, "the cat\nsat on the mat\n"},
		{"two on a line, right to left", "tbe tbe\n", []ChangeLine{{Line: 1, Column: 1, Before: "tbe", After: "the"}, {Line: 1, Column: 5, Before: "tbe", After: "thee"}}, "the thee\n"},
		{"split", "tothe sea\n", []ChangeLine{{Line: 1, Column: 1, Before: "tothe", After: "to the"}}, "to the sea\n"},
		{"join", "sea wall ok\n", []ChangeLine{{Line: 1, Column: 1, Before: "sea wall", After: "seawall"}}, "seawall ok\n"},
		{"delete in line", "a ~ b\n", []ChangeLine{{Line: 1, Column: 3, Before: "~", After: ""}}, "a b\n"},
		{"delete at end", "a b ~\n", []ChangeLine{{Line: 1, Column: 5, Before: "~", After: ""}}, "a b\n"},
		{"delete a line", "a\n~\nb\n", []ChangeLine{{Line: 2, Column: 1, Before: "~", After: ""}}, "a\nb\n"},
		{"delete a paragraph", "a\n\n~\n\nb\n", []ChangeLine{{Line: 3, Column: 1, Before: "~", After: ""}}, "a\n\nb\n"},
		{"runes, not bytes", "ærø tbe\n", []ChangeLine{{Line: 1, Column: 5, Before: "tbe", After: "the"}}, "ærø the\n"},
		{"not found", "the cat\n", []ChangeLine{{Line: 1, Column: 1, Before: "tbe", After: "the"}}, "the cat\n"},
	} {
		t.Run(c.name, func(t *testing.T) {
			if got, _ := ApplyChanges(c.text, c.keep); got != c.want {
				t.Errorf("got %q, want %q", got, c.want)
			}
		})
	}
}

// TestReviewedDecisionsReachReports follows #13's "Effect": a reviewed
// decision and a rejected correction change rescan.csv, pages.csv,
// titles.* and the corrected text after recto report; a rerun keeps them
// for unchanged images and drops them for a changed one.
func TestReviewedDecisionsReachReports(t *testing.T) {
	ctx := context.Background()
	coll, truth := testCollection(t, 2, 4, false)
	out := filepath.Join(t.TempDir(), "out")
	o := Options{Collection: coll, Out: out, Truth: truth, Correct: 0.001, Rescan: 1} // every page corrected
	if _, stderr, err := runTest(t, o); err != nil {
		t.Fatal(err, stderr)
	}
	var acc, cor ledger.Page // acc's decision is overturned; one of cor's corrections rejected
	var changes []ChangeLine
	for _, r := range ledgerRows(t, out) {
		if c, _ := ChangesOf(out, r); len(c) >= 2 && cor.Rel == "" {
			cor, changes = r, c
		} else if r.Decision == "correct" && acc.Rel == "" {
			acc = r
		}
	}
	if acc.Rel == "" || cor.Rel == "" {
		t.Fatalf("test collection lacks an accepted page (%q) or a page with two changes (%q)", acc.Rel, cor.Rel)
	}
	l, err := ledger.OpenReview(filepath.Join(out, ledger.FileName), false)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := l.Record(ctx, ledger.ReviewEntry{Rel: acc.Rel, Kind: ledger.KindDecision, New: "rescan", Note: "=ink <smudge>", Who: "ann"}, -1); err != nil {
		t.Fatal(err)
	}
	rej := changes[0]
	if _, err := l.Record(ctx, ledger.ReviewEntry{Rel: cor.Rel, Kind: ledger.KindCorrection, Item: rej.Key(), New: ledger.Rejected, Who: "ann"}, -1); err != nil {
		t.Fatal(err)
	}
	l.Close()
	if _, err := Report(ctx, out); err != nil {
		t.Fatal(err)
	}
	check := func(when string, want bool) {
		t.Helper()
		rescan := readCSV(t, filepath.Join(out, reportDir, "rescan.csv"))
		r := csvRow(rescan, "image", acc.Rel)
		if want != (r != nil) {
			t.Fatalf("%s: reviewed page in rescan.csv: %v, want %v", when, r, want)
		}
		if want && !strings.HasPrefix(r["reasons"], "reviewed by ann: '=ink <smudge>") && !strings.HasPrefix(r["reasons"], "reviewed by ann: =ink <smudge>") {
			t.Errorf("%s: rescan.csv reasons %q: want the reviewer and note first", when, r["reasons"])
		}
		pages := readCSV(t, filepath.Join(out, reportDir, "pages.csv"))
		p := csvRow(pages, "image", acc.Rel)
		if want && (p["decision"] != "rescan" || p["reviewed"] != "ann" || !strings.Contains(p["reasons"], "triage said correct")) {
			t.Errorf("%s: pages.csv row %v", when, p)
		}
		if !want && (p["decision"] != "correct" || p["reviewed"] != "") {
			t.Errorf("%s: pages.csv row %v, want triage's decision unreviewed", when, p)
		}
		c := csvRow(pages, "image", cor.Rel)
		if want && c["corrections"] != strconv.Itoa(cor.Corrections-1) {
			t.Errorf("%s: corrections of %s = %s, want %d (one rejected)", when, cor.Rel, c["corrections"], cor.Corrections-1)
		}
		titles := readCSV(t, filepath.Join(out, reportDir, "titles.csv"))
		tot := csvRow(titles, "title", "(all)")
		if want && tot["reviewed"] != "2" {
			t.Errorf("%s: titles.csv reviewed = %q, want 2", when, tot["reviewed"])
		}
	}
	check("after recto report", true)
	html, _ := os.ReadFile(filepath.Join(out, reportDir, "report.html"))
	if !strings.Contains(string(html), "2 pages reviewed in recto review") || !strings.Contains(string(html), "<small>reviewed</small>") {
		t.Error("report.html does not mark the reviewed pages")
	}

	// The corrected text keeps every change but the rejected one.
	stem := strings.TrimSuffix(strings.TrimPrefix(EngineText(cor), "ocr/"), ".txt")
	got, err := os.ReadFile(filepath.Join(out, reviewedDir, stem+".txt"))
	if err != nil {
		t.Fatal(err)
	}
	engine, _ := os.ReadFile(filepath.Join(out, EngineText(cor)))
	want, _ := ApplyChanges(string(engine), changes[1:])
	if string(got) != want {
		t.Errorf("reviewed text\n%q\nwant\n%q", got, want)
	}
	if !strings.Contains(string(got), rej.Before) {
		t.Errorf("reviewed text lacks the rejected change's original %q", rej.Before)
	}
	cl, _ := os.ReadFile(filepath.Join(out, correctedDir, ChangesFile))
	if !strings.Contains(string(cl), `"blocked":"`+BlockedReview+`"`) {
		t.Errorf("changes.jsonl does not mark the rejected change:\n%s", cl)
	}

	// A rerun with the same images keeps both.
	if _, stderr, err := runTest(t, o); err != nil {
		t.Fatal(err, stderr)
	}
	check("after a rerun", true)

	// A new image for the reviewed page: judged afresh.
	f, err := os.Open(acc.Source)
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(f)
	f.Close()
	if err != nil {
		t.Fatal(err)
	}
	g := img.(*image.Gray)
	g.Pix[0] ^= 0xff
	var buf bytes.Buffer
	if err := synth.WritePNG(&buf, g, 75); err != nil {
		t.Fatal(err)
	}
	mustWrite(t, acc.Source, buf.Bytes())
	if _, stderr, err := runTest(t, o); err != nil {
		t.Fatal(err, stderr)
	}
	check("after the image changed", false)
}

// TestReviewOfFailedPageIgnored: a page reviewed while done that fails in
// a later run (here a set-up failure, not the scan's fault) is reported as
// failed, not with the reviewed decision.
func TestReviewOfFailedPageIgnored(t *testing.T) {
	ctx := context.Background()
	coll, _ := testCollection(t, 1, 2, false)
	out := filepath.Join(t.TempDir(), "out")
	if _, se, err := runTest(t, Options{Collection: coll, Out: out}); err != nil {
		t.Fatal(err, se)
	}
	rows := ledgerRows(t, out)
	l, err := ledger.OpenReview(filepath.Join(out, ledger.FileName), false)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := l.Record(ctx, ledger.ReviewEntry{Rel: rows[0].Rel, Kind: ledger.KindDecision, New: "rescan", Who: "ann"}, -1); err != nil {
		t.Fatal(err)
	}
	l.Close()
	w, err := ledger.Open(filepath.Join(out, ledger.FileName))
	if err != nil {
		t.Fatal(err)
	}
	f := rows[0]
	f.State, f.Problem, f.Error, f.Decision = ledger.StateFailed, ledger.ProblemSetup, "disk full", ""
	if err := w.Put(ctx, f); err != nil {
		t.Fatal(err)
	}
	w.Close()
	if _, err := Report(ctx, out); err != nil {
		t.Fatal(err)
	}
	if r := csvRow(readCSV(t, filepath.Join(out, reportDir, "rescan.csv")), "image", f.Rel); r != nil {
		t.Errorf("failed page listed for rescan with its old review: %v", r)
	}
	if p := csvRow(readCSV(t, filepath.Join(out, reportDir, "pages.csv")), "image", f.Rel); p["status"] != "failed" || p["decision"] != "" || p["reviewed"] != "" {
		t.Errorf("pages.csv row %v", p)
	}
}
