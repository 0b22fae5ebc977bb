package ledger

import (
	"context"
	"errors"
	"fmt"
	"path/filepath"
	"sync"
	"testing"
)

// reviewLedger writes a ledger with the pages rels (done, decision
// accept) and returns its path.
func reviewLedger(t testing.TB, rels ...string) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), FileName)
	l, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	var ps []Page
	for _, r := range rels {
		ps = append(ps, samplePage(r))
	}
	if err := l.PutAll(context.Background(), ps); err != nil {
		t.Fatal(err)
	}
	if err := l.Close(); err != nil {
		t.Fatal(err)
	}
	return path
}

func TestReviewRecordUndo(t *testing.T) {
	ctx := context.Background()
	path := reviewLedger(t, "a/1.png", "a/2.png")
	l, err := OpenReview(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	if r, _ := l.ReviewOf(ctx, "a/1.png"); r.Decision != "" || r.Last != 0 {
		t.Fatalf("unreviewed page: %+v", r)
	}
	e, err := l.Record(ctx, ReviewEntry{Rel: "a/1.png", Kind: KindDecision, New: "rescan", Note: "torn <corner>", Who: "ann"}, 0)
	if err != nil {
		t.Fatal(err)
	}
	if e.Old != "accept" || e.SHA256 != "abc" || e.At.IsZero() {
		t.Errorf("stored entry %+v: want old accept (triage), the page's hash and a time", e)
	}
	key := CorrectionKey(2, 5, "tbe", "the")
	if _, err := l.Record(ctx, ReviewEntry{Rel: "a/1.png", Kind: KindCorrection, Item: key, New: Rejected, Who: "ann"}, e.ID); err != nil {
		t.Fatal(err)
	}
	e3, err := l.Record(ctx, ReviewEntry{Rel: "a/1.png", Kind: KindDecision, New: "correct", Who: "ann"}, -1)
	if err != nil {
		t.Fatal(err)
	}
	if e3.Old != "rescan" {
		t.Errorf("second decision old = %q, want rescan (the reviewed value it replaced)", e3.Old)
	}
	r, err := l.ReviewOf(ctx, "a/1.png")
	if err != nil {
		t.Fatal(err)
	}
	if r.Decision != "correct" || !r.Rejected(key) || r.Who != "ann" || r.Last != e3.ID {
		t.Errorf("review = %+v", r)
	}
	// Undo walks back one entry at a time.
	u, ok, err := l.Undo(ctx, "a/1.png", "ann", r.Last)
	if err != nil || !ok || u.Undoes != e3.ID || u.New != "rescan" {
		t.Fatalf("undo = %+v, %v, %v", u, ok, err)
	}
	if r, _ := l.ReviewOf(ctx, "a/1.png"); r.Decision != "rescan" || r.Note != "torn <corner>" {
		t.Errorf("after one undo: %+v, want rescan with its note", r)
	}
	for range 2 {
		if _, ok, err := l.Undo(ctx, "a/1.png", "ann", -1); err != nil || !ok {
			t.Fatal(ok, err)
		}
	}
	r, _ = l.ReviewOf(ctx, "a/1.png")
	if r.Decision != "" || r.Rejected(key) {
		t.Errorf("after undoing all: %+v, want unreviewed", r)
	}
	if _, ok, _ := l.Undo(ctx, "a/1.png", "ann", -1); ok {
		t.Error("undo with nothing left reported ok")
	}
	log, err := l.ReviewLog(ctx, "a/1.png")
	if err != nil || len(log) != 6 {
		t.Fatalf("log has %d entries (%v), want 6: three changes and three undos, none deleted", len(log), err)
	}
	if _, err := l.Record(ctx, ReviewEntry{Rel: "nope.png", Kind: KindDecision, New: "accept", Who: "ann"}, -1); !errors.Is(err, ErrNotReviewable) {
		t.Errorf("unknown page: %v, want ErrNotReviewable", err)
	}
}

// TestReviewConflict: a session that acts on a stale view is told, and
// stores nothing.
func TestReviewConflict(t *testing.T) {
	ctx := context.Background()
	path := reviewLedger(t, "p.png")
	a, err := OpenReview(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer a.Close()
	b, err := OpenReview(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer b.Close()
	if _, err := a.Record(ctx, ReviewEntry{Rel: "p.png", Kind: KindDecision, New: "rescan", Who: "ann"}, 0); err != nil {
		t.Fatal(err)
	}
	_, err = b.Record(ctx, ReviewEntry{Rel: "p.png", Kind: KindDecision, New: "accept", Who: "bo"}, 0)
	if !errors.Is(err, ErrConflict) {
		t.Fatalf("stale write: %v, want ErrConflict", err)
	}
	if r, _ := b.ReviewOf(ctx, "p.png"); r.Decision != "rescan" {
		t.Errorf("after refused write: %q, want rescan", r.Decision)
	}
}

// TestReviewSessionsLoseNothing: two sessions (two connections, as two
// recto review processes) write at once; every change is in the log and
// each page ends with its last value.
func TestReviewSessionsLoseNothing(t *testing.T) {
	ctx := context.Background()
	var rels []string
	for i := range 20 {
		rels = append(rels, fmt.Sprintf("t/%02d.png", i))
	}
	path := reviewLedger(t, rels...)
	var wg sync.WaitGroup
	errs := make(chan error, 2)
	for s, who := range []string{"ann", "bo"} {
		wg.Add(1)
		go func() {
			defer wg.Done()
			l, err := OpenReview(path, false)
			if err != nil {
				errs <- err
				return
			}
			defer l.Close()
			for i, rel := range rels {
				key := CorrectionKey(1, 1, who, "x")
				if _, err := l.Record(ctx, ReviewEntry{Rel: rel, Kind: KindCorrection, Item: key, New: Rejected, Who: who}, -1); err != nil {
					errs <- err
					return
				}
				if i%2 == s {
					if _, err := l.Record(ctx, ReviewEntry{Rel: rel, Kind: KindDecision, New: "rescan", Note: who, Who: who}, -1); err != nil {
						errs <- err
						return
					}
				}
			}
		}()
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Fatal(err)
	}
	l, err := OpenReview(path, true)
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	m, err := l.Reviews(ctx)
	if err != nil {
		t.Fatal(err)
	}
	for i, rel := range rels {
		r := m[rel]
		want := []string{"ann", "bo"}[i%2]
		if r.Decision != "rescan" || r.Note != want { // the note names the session that decided
			t.Errorf("%s: %+v, want rescan by %s", rel, r, want)
		}
		if !r.Rejected(CorrectionKey(1, 1, "ann", "x")) || !r.Rejected(CorrectionKey(1, 1, "bo", "x")) {
			t.Errorf("%s: a session's rejection was lost: %v", rel, r.Corrections)
		}
	}
}

// TestReviewFollowsInput: a review counts only for the input it was made
// on; a rerun that keeps the image keeps it.
func TestReviewFollowsInput(t *testing.T) {
	ctx := context.Background()
	path := reviewLedger(t, "p.png", "q.png")
	l, err := OpenReview(path, false)
	if err != nil {
		t.Fatal(err)
	}
	for _, rel := range []string{"p.png", "q.png"} {
		if _, err := l.Record(ctx, ReviewEntry{Rel: rel, Kind: KindDecision, New: "rescan", Who: "ann"}, -1); err != nil {
			t.Fatal(err)
		}
	}
	l.Close()
	// The run writes both rows again; q's image changed.
	w, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	p, q := samplePage("p.png"), samplePage("q.png")
	p.Config, q.SHA256 = "other settings", "def"
	if err := w.PutAll(ctx, []Page{p, q}); err != nil {
		t.Fatal(err)
	}
	m, err := w.Reviews(ctx)
	w.Close()
	if err != nil {
		t.Fatal(err)
	}
	if m["p.png"].Decision != "rescan" {
		t.Errorf("unchanged input: review lost: %+v", m["p.png"])
	}
	if m["q.png"].Decision != "" {
		t.Errorf("changed input: review still applied: %+v", m["q.png"])
	}
}

func TestReviewReadOnly(t *testing.T) {
	path := reviewLedger(t, "p.png")
	l, err := OpenReview(path, true)
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	if m, err := l.Reviews(context.Background()); err != nil || len(m) != 0 {
		t.Errorf("no tables yet: %v, %v", m, err)
	}
	if _, err := l.Record(context.Background(), ReviewEntry{Rel: "p.png", Kind: KindDecision, New: "rescan", Who: "ann"}, -1); err == nil {
		t.Error("read-only ledger stored a review")
	}
}
