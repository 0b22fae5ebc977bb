package ledger

import (
	"bytes"
	"context"
	"database/sql"
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"sync/atomic"
	"testing"
	"time"
)

func samplePage(rel string) Page {
	return Page{
		Rel: rel, Title: "t", Page: rel, Source: "/in/" + rel, SHA256: "abc", Size: 10, Config: "cfg",
		State: StateDone, Decision: "accept", PredictedCER: 0.03, Reasons: []string{"low noise"},
		MeanConf: 0.91, Words: 120, Corrections: 2, HasTruth: true, RefChars: 600, RefWords: 110,
		CharErrs: 12, WordErrs: 5, CharErrsAf: 10, WordErrsAf: 4, FlexErrs: 9, BagErrs: 7, FlexErrsAf: 8, BagErrsAf: 6,
		Outputs: []string{"ocr/" + rel + ".txt"}, Timings: map[string]float64{"engine": 1234.5},
		Done: time.Date(2026, 1, 2, 3, 4, 5, 0, time.UTC),
	}
}

func TestRoundTrip(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "sub", FileName)
	l, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	want := []Page{samplePage("a/1.png"), samplePage("a/2.png")}
	want[1].State, want[1].Error, want[1].Reasons, want[1].Outputs = StateFailed, `decode "a/2.png": bad`, nil, nil
	for _, p := range want {
		if err := l.Put(ctx, p); err != nil {
			t.Fatal(err)
		}
	}
	if err := l.SetMeta(ctx, "root", "/in"); err != nil {
		t.Fatal(err)
	}
	l.Close()

	r, err := OpenReadOnly(path)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	got, err := r.Pages(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("Pages() =\n%+v\nwant\n%+v", got, want)
	}
	if v, _ := r.Meta(ctx, "root"); v != "/in" {
		t.Errorf("Meta(root) = %q", v)
	}
	keys, err := r.DoneKeys(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if len(keys) != 1 || keys["a/1.png"] != (Key{"abc", "cfg"}) {
		t.Errorf("DoneKeys() = %v, want only a/1.png", keys)
	}
}

func TestSecondOpenRefused(t *testing.T) {
	path := filepath.Join(t.TempDir(), FileName)
	l, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	if l2, err := Open(path); !errors.Is(err, ErrLocked) {
		if l2 != nil {
			l2.Close()
		}
		t.Fatalf("second Open: err = %v, want ErrLocked", err)
	}
	l.Close()
	l3, err := Open(path) // released on close
	if err != nil {
		t.Fatalf("Open after Close: %v", err)
	}
	l3.Close()
}

func TestWriterCommitsAll(t *testing.T) {
	path := filepath.Join(t.TempDir(), FileName)
	l, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	var n atomic.Int32
	w := l.NewWriter(func(Page) { n.Add(1) })
	for _, r := range []string{"x/1", "x/2", "x/3", "x/1"} {
		w.Put(samplePage(r))
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	pages, _ := l.Pages(context.Background())
	if len(pages) != 3 || n.Load() != 4 {
		t.Errorf("rows = %d, commits = %d; want 3 rows, 4 commits", len(pages), n.Load())
	}
}

func TestMergePrefersDoneThenLater(t *testing.T) {
	ctx := context.Background()
	dir := t.TempDir()
	put := func(name string, ps ...Page) string {
		p := filepath.Join(dir, name, FileName)
		l, err := Open(p)
		if err != nil {
			t.Fatal(err)
		}
		for _, pg := range ps {
			if err := l.Put(ctx, pg); err != nil {
				t.Fatal(err)
			}
		}
		l.Close()
		return p
	}
	failed := samplePage("a")
	failed.State, failed.Done = StateFailed, failed.Done.Add(time.Hour)
	older := samplePage("b")
	newer := samplePage("b")
	newer.Words, newer.Done = 7, newer.Done.Add(time.Minute)
	s1 := put("s1", failed, older)
	s2 := put("s2", samplePage("a"), newer, samplePage("c"))
	dst, err := Open(filepath.Join(dir, "out", FileName))
	if err != nil {
		t.Fatal(err)
	}
	defer dst.Close()
	if _, err := dst.Merge(ctx, s1, s2); err != nil {
		t.Fatal(err)
	}
	got, _ := dst.Pages(ctx)
	if len(got) != 3 || got[0].State != StateDone || got[1].Words != 7 || got[2].Rel != "c" {
		t.Errorf("merged = %+v", got)
	}
}

// TestUpgradeFromVersion1: a ledger written by schema version 1 opens,
// keeps its rows and gains the problem and warnings columns (version 2)
// and the order-free counts, -1 for not measured (version 3).
func TestUpgradeFromVersion1(t *testing.T) {
	path := filepath.Join(t.TempDir(), FileName)
	db, err := sql.Open("sqlite", "file:"+path)
	if err != nil {
		t.Fatal(err)
	}
	v1, _, _ := strings.Cut(schema, ",\n\tproblem ")
	v1 += "\n);"
	if !strings.Contains(v1, "word_errs_after") {
		t.Fatal("could not make the version 1 schema")
	}
	for _, q := range []string{v1, `INSERT INTO meta VALUES('schema', '1')`,
		`INSERT INTO pages VALUES('T/a.png','T','a.png','/c/T/a.png','00',1,'c','','done','','accept',0.1,'[]',0.9,3,0,1,9,2,1,1,1,1,'["ocr/T/a.txt"]','{}','2024-01-01T00:00:00Z')`} {
		if _, err := db.Exec(q); err != nil {
			t.Fatal(q, err)
		}
	}
	db.Close()
	l, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	rows, err := l.Pages(context.Background())
	if err != nil || len(rows) != 1 || rows[0].Outputs[0] != "ocr/T/a.txt" || rows[0].Problem != "" {
		t.Fatalf("rows %+v, %v", rows, err)
	}
	if r := rows[0]; r.FlexErrs != -1 || r.BagErrs != -1 || r.FlexErrsAf != -1 || r.BagErrsAf != -1 {
		t.Errorf("order-free counts of an upgraded row = %d %d %d %d, want -1 (not measured)", r.FlexErrs, r.BagErrs, r.FlexErrsAf, r.BagErrsAf)
	}
	if r := rows[0]; r.Config == "c" || r.CharErrs != 1 {
		t.Errorf("upgraded row with ground truth: config %q (want changed, so the next run measures it), char errors %d (want 1 kept)", r.Config, r.CharErrs)
	}
	if v, _ := l.Meta(context.Background(), "schema"); v != "3" {
		t.Errorf("schema %q after upgrade, want 3", v)
	}
}

// TestDamagedLedgerSaysWhatToDo: a ledger file that is not a database is
// named, with how to start over without losing the outputs.
func TestDamagedLedgerSaysWhatToDo(t *testing.T) {
	path := filepath.Join(t.TempDir(), FileName)
	if err := os.WriteFile(path, bytes.Repeat([]byte("not a database "), 400), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := Open(path)
	if !errors.Is(err, ErrDamaged) {
		t.Fatalf("err = %v, want ErrDamaged", err)
	}
	for _, want := range []string{path, "mv ", ".damaged", "reports are rebuilt"} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("message %q lacks %q", err, want)
		}
	}
}

// TestOutputsKeepBytes: output names that are not UTF-8 come back byte
// for byte (JSON alone would turn them into U+FFFD).
func TestOutputsKeepBytes(t *testing.T) {
	l, err := Open(filepath.Join(t.TempDir(), FileName))
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	outs := []string{"ocr/T/latin1-\xe9.png.txt", `ocr/T/back\slash.png.txt`}
	if err := l.Put(context.Background(), Page{Rel: "T/latin1-\xe9.png", State: StateDone, Outputs: outs}); err != nil {
		t.Fatal(err)
	}
	rows, _ := l.Pages(context.Background())
	if len(rows) != 1 || rows[0].Rel != "T/latin1-\xe9.png" || rows[0].Outputs[0] != outs[0] || rows[0].Outputs[1] != outs[1] {
		t.Errorf("rows %+v", rows)
	}
}
