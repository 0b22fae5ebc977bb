package ledger

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"os"
	"time"
)

// The review tables hold what people decided in 'recto review': one
// append-only log of changes (who, when, old and new value, note). The
// state of a page is its latest live entry per kind and item; an undo is
// itself an entry, and marks the entry it undoes. The tables sit beside
// the pages table and are never touched by a run, so a rerun keeps them;
// an entry counts only while the page's input hash is the one it was made
// on (a changed image is judged afresh).
const reviewSchema = `
CREATE TABLE IF NOT EXISTS review_log (
	id        INTEGER PRIMARY KEY AUTOINCREMENT,
	rel       TEXT NOT NULL,
	sha256    TEXT NOT NULL,
	kind      TEXT NOT NULL,
	item      TEXT NOT NULL,
	old       TEXT NOT NULL,
	new       TEXT NOT NULL,
	note      TEXT NOT NULL,
	who       TEXT NOT NULL,
	at        TEXT NOT NULL,
	undoes    INTEGER NOT NULL DEFAULT 0,
	undone_by INTEGER NOT NULL DEFAULT 0
);
CREATE INDEX IF NOT EXISTS review_log_rel ON review_log(rel, id);`

// Kinds of review entries.
const (
	KindDecision   = "decision"   // the page's decision: Item is "", values accept, correct, rescan, ...
	KindCorrection = "correction" // one correction: Item is its key (CorrectionKey), values accepted or rejected
)

// Values of a correction entry.
const (
	Accepted = "accepted"
	Rejected = "rejected"
)

// ErrConflict is wrapped by the error of Record and Undo when the page was
// changed by someone else since the caller last looked (its latest entry
// is not the one the caller saw).
var ErrConflict = errors.New("ledger: the page was changed in another review session")

// ErrNotReviewable is returned by Record for a page the ledger does not
// hold as done.
var ErrNotReviewable = errors.New("ledger: no such page done in this run")

// ReviewEntry is one line of the review log.
type ReviewEntry struct {
	ID     int64
	Rel    string    // the page's ledger key
	SHA256 string    // the page's input hash when the entry was made
	Kind   string    // KindDecision or KindCorrection
	Item   string    // "" for a decision; the correction's key
	Old    string    // value before the entry
	New    string    // value after it
	Note   string    // what the reviewer wrote, may be ""
	Who    string    // operating-system user
	At     time.Time // UTC
	Undoes int64     // for an undo entry, the ID of the entry it undoes; else 0
	// UndoneBy is the ID of the undo entry that cancelled this one; 0 while it stands.
	UndoneBy int64
}

// Review is the reviewed state of one page: the live entries that apply
// to its current input.
type Review struct {
	Decision string    // the reviewed decision; "" when the decision was not reviewed
	Note     string    // note of the decision entry
	Who      string    // who made the page's latest standing entry (of either kind)
	At       time.Time // when
	// Corrections maps a correction key to Accepted or Rejected, for
	// corrections a reviewer judged; unjudged corrections stand.
	Corrections map[string]string
	// Last is the ID of the page's latest entry (undo entries included),
	// 0 when it has none: the version a caller passes back as seen.
	Last int64
}

// Rejected reports whether the correction key was rejected.
func (r Review) Rejected(key string) bool { return r.Corrections[key] == Rejected }

// CorrectionKey names one correction of a page for the review log: its
// place in the engine text and its before and after text, so that a
// rejection never applies to a different correction after a rerun.
func CorrectionKey(line, column int, before, after string) string {
	return fmt.Sprintf("%d:%d:%s\x1f%s", line, column, before, after)
}

// OpenReview opens an existing ledger for review without taking the run's
// lock: review sessions may run beside each other and beside a run, and
// SQLite serialises their writes (every write transaction starts
// IMMEDIATE, so two sessions never both read a state and then write over
// each other). readOnly opens it without any write. The review tables are
// created when missing.
func OpenReview(path string, readOnly bool) (*Ledger, error) {
	if _, err := os.Stat(path); err != nil {
		return nil, fmt.Errorf("ledger: %w", err)
	}
	db, err := sql.Open("sqlite", dsn(path, readOnly, true))
	if err != nil {
		return nil, fmt.Errorf("ledger: %q: %w", path, err)
	}
	db.SetMaxOpenConns(1)
	l := &Ledger{db: db, path: path, readOnly: readOnly}
	if err := db.Ping(); err != nil {
		db.Close()
		return nil, describe(path, fmt.Errorf("ledger: %q: %w", path, err))
	}
	if !readOnly {
		if _, err := db.Exec(reviewSchema); err != nil {
			db.Close()
			return nil, describe(path, fmt.Errorf("ledger: %q: review tables: %w", path, err))
		}
	}
	return l, nil
}

// hasReviews reports whether the review tables exist (a ledger no review
// session opened has none).
func (l *Ledger) hasReviews(ctx context.Context) (bool, error) {
	var n int
	err := l.db.QueryRowContext(ctx, `SELECT count(*) FROM sqlite_master WHERE type = 'table' AND name = 'review_log'`).Scan(&n)
	if err != nil {
		return false, fmt.Errorf("ledger: %q: %w", l.path, err)
	}
	return n > 0, nil
}

// Record stores one review change in its own committed transaction and
// returns it as stored. e.Rel, e.Kind, e.New and e.Who must be set;
// e.Item names a correction. The old value, the page's input hash and the
// time are filled in from the ledger inside the transaction, so the old
// value is the one really replaced. seen is the page's Review.Last as the
// caller saw it, or -1 to skip the check; when another entry was made
// since, nothing is stored and the error wraps ErrConflict.
func (l *Ledger) Record(ctx context.Context, e ReviewEntry, seen int64) (ReviewEntry, error) {
	if e.Kind != KindDecision && e.Kind != KindCorrection {
		return ReviewEntry{}, fmt.Errorf("ledger: review kind %q", e.Kind)
	}
	tx, err := l.db.BeginTx(ctx, nil)
	if err != nil {
		return ReviewEntry{}, describe(l.path, fmt.Errorf("ledger: %w", err))
	}
	defer tx.Rollback()
	var sha, decision string
	err = tx.QueryRowContext(ctx, `SELECT sha256, decision FROM pages WHERE rel = ? AND state = ?`, e.Rel, string(StateDone)).Scan(&sha, &decision)
	if errors.Is(err, sql.ErrNoRows) {
		return ReviewEntry{}, fmt.Errorf("%w: %q", ErrNotReviewable, e.Rel)
	}
	if err != nil {
		return ReviewEntry{}, describe(l.path, fmt.Errorf("ledger: %w", err))
	}
	if err := checkSeen(ctx, tx, e.Rel, seen); err != nil {
		return ReviewEntry{}, err
	}
	old := Accepted
	if e.Kind == KindDecision {
		old = decision
	}
	// The live value for this item on this input, if any.
	var cur string
	err = tx.QueryRowContext(ctx, `SELECT new FROM review_log WHERE rel = ? AND sha256 = ? AND kind = ? AND item = ?
		AND undoes = 0 AND undone_by = 0 ORDER BY id DESC LIMIT 1`, e.Rel, sha, e.Kind, e.Item).Scan(&cur)
	switch {
	case err == nil:
		old = cur
	case !errors.Is(err, sql.ErrNoRows):
		return ReviewEntry{}, describe(l.path, fmt.Errorf("ledger: %w", err))
	}
	e.Old, e.SHA256, e.Undoes, e.UndoneBy = old, sha, 0, 0
	e.At = time.Now().UTC()
	res, err := tx.ExecContext(ctx, `INSERT INTO review_log(rel, sha256, kind, item, old, new, note, who, at)
		VALUES(?,?,?,?,?,?,?,?,?)`, e.Rel, e.SHA256, e.Kind, e.Item, e.Old, e.New, e.Note, e.Who, e.At.Format(time.RFC3339Nano))
	if err != nil {
		return ReviewEntry{}, describe(l.path, fmt.Errorf("ledger: review of %q: %w", e.Rel, err))
	}
	if e.ID, err = res.LastInsertId(); err != nil {
		return ReviewEntry{}, fmt.Errorf("ledger: %w", err)
	}
	if err := tx.Commit(); err != nil {
		return ReviewEntry{}, describe(l.path, fmt.Errorf("ledger: review of %q: %w", e.Rel, err))
	}
	return e, nil
}

// checkSeen returns an error wrapping ErrConflict when rel's latest entry
// is not seen (seen < 0 skips the check).
func checkSeen(ctx context.Context, tx *sql.Tx, rel string, seen int64) error {
	if seen < 0 {
		return nil
	}
	var last int64
	var who, at string
	err := tx.QueryRowContext(ctx, `SELECT id, who, at FROM review_log WHERE rel = ? ORDER BY id DESC LIMIT 1`, rel).Scan(&last, &who, &at)
	if errors.Is(err, sql.ErrNoRows) {
		last = 0
	} else if err != nil {
		return fmt.Errorf("ledger: %w", err)
	}
	if last != seen {
		return fmt.Errorf("%w: %q was changed by %s at %s; reload the page to see it", ErrConflict, rel, who, at)
	}
	return nil
}

// Undo cancels the latest standing entry of page rel (an undo is never
// itself undone: undo again to go one step further back) by storing an
// undo entry that restores its old value. It returns the undo entry, or
// ok false when the page has nothing left to undo. seen is as for Record.
func (l *Ledger) Undo(ctx context.Context, rel, who string, seen int64) (e ReviewEntry, ok bool, err error) {
	tx, err := l.db.BeginTx(ctx, nil)
	if err != nil {
		return ReviewEntry{}, false, describe(l.path, fmt.Errorf("ledger: %w", err))
	}
	defer tx.Rollback()
	if err := checkSeen(ctx, tx, rel, seen); err != nil {
		return ReviewEntry{}, false, err
	}
	var t ReviewEntry
	err = tx.QueryRowContext(ctx, `SELECT id, sha256, kind, item, old, new FROM review_log
		WHERE rel = ? AND undoes = 0 AND undone_by = 0 ORDER BY id DESC LIMIT 1`, rel).Scan(&t.ID, &t.SHA256, &t.Kind, &t.Item, &t.Old, &t.New)
	if errors.Is(err, sql.ErrNoRows) {
		return ReviewEntry{}, false, nil
	}
	if err != nil {
		return ReviewEntry{}, false, fmt.Errorf("ledger: %w", err)
	}
	e = ReviewEntry{Rel: rel, SHA256: t.SHA256, Kind: t.Kind, Item: t.Item, Old: t.New, New: t.Old,
		Note: "undo", Who: who, At: time.Now().UTC(), Undoes: t.ID}
	res, err := tx.ExecContext(ctx, `INSERT INTO review_log(rel, sha256, kind, item, old, new, note, who, at, undoes)
		VALUES(?,?,?,?,?,?,?,?,?,?)`, e.Rel, e.SHA256, e.Kind, e.Item, e.Old, e.New, e.Note, e.Who, e.At.Format(time.RFC3339Nano), e.Undoes)
	if err != nil {
		return ReviewEntry{}, false, describe(l.path, fmt.Errorf("ledger: undo on %q: %w", rel, err))
	}
	if e.ID, err = res.LastInsertId(); err != nil {
		return ReviewEntry{}, false, fmt.Errorf("ledger: %w", err)
	}
	if _, err := tx.ExecContext(ctx, `UPDATE review_log SET undone_by = ? WHERE id = ?`, e.ID, t.ID); err != nil {
		return ReviewEntry{}, false, describe(l.path, fmt.Errorf("ledger: undo on %q: %w", rel, err))
	}
	if err := tx.Commit(); err != nil {
		return ReviewEntry{}, false, describe(l.path, fmt.Errorf("ledger: undo on %q: %w", rel, err))
	}
	return e, true, nil
}

// Reviews returns the reviewed state of every page that has review
// entries, keyed by the page's ledger key. Entries made on another input
// than the page's current one (its image changed since) do not count, but
// they move Last. A ledger without review tables gives an empty map.
func (l *Ledger) Reviews(ctx context.Context) (map[string]Review, error) {
	return l.reviews(ctx, "")
}

// ReviewOf returns the reviewed state of one page (the zero Review when it
// has none).
func (l *Ledger) ReviewOf(ctx context.Context, rel string) (Review, error) {
	m, err := l.reviews(ctx, rel)
	if err != nil {
		return Review{}, err
	}
	return m[rel], nil
}

func (l *Ledger) reviews(ctx context.Context, only string) (map[string]Review, error) {
	out := make(map[string]Review)
	if ok, err := l.hasReviews(ctx); err != nil || !ok {
		return out, err
	}
	q := `SELECT r.id, r.rel, r.kind, r.item, r.new, r.note, r.who, r.at, r.undoes, r.undone_by,
		coalesce(p.sha256 = r.sha256, 0) FROM review_log r LEFT JOIN pages p ON p.rel = r.rel`
	args := []any{}
	if only != "" {
		q += ` WHERE r.rel = ?`
		args = append(args, only)
	}
	rows, err := l.db.QueryContext(ctx, q+` ORDER BY r.id`, args...)
	if err != nil {
		return nil, fmt.Errorf("ledger: %q: %w", l.path, err)
	}
	defer rows.Close()
	for rows.Next() {
		var id, undoes, undoneBy int64
		var rel, kind, item, val, note, who, at string
		var current bool
		if err := rows.Scan(&id, &rel, &kind, &item, &val, &note, &who, &at, &undoes, &undoneBy, &current); err != nil {
			return nil, fmt.Errorf("ledger: %q: %w", l.path, err)
		}
		r := out[rel]
		r.Last = id
		if current && undoes == 0 && undoneBy == 0 {
			r.Who = who
			r.At, _ = time.Parse(time.RFC3339Nano, at)
			switch kind {
			case KindDecision:
				r.Decision, r.Note = val, note
			case KindCorrection:
				if r.Corrections == nil {
					r.Corrections = make(map[string]string)
				}
				r.Corrections[item] = val
			}
		}
		out[rel] = r
	}
	if err := rows.Err(); err != nil {
		return nil, fmt.Errorf("ledger: %q: %w", l.path, err)
	}
	return out, nil
}

// ReviewLog returns the review entries of page rel, oldest first.
func (l *Ledger) ReviewLog(ctx context.Context, rel string) ([]ReviewEntry, error) {
	if ok, err := l.hasReviews(ctx); err != nil || !ok {
		return nil, err
	}
	rows, err := l.db.QueryContext(ctx, `SELECT id, rel, sha256, kind, item, old, new, note, who, at, undoes, undone_by
		FROM review_log WHERE rel = ? ORDER BY id`, rel)
	if err != nil {
		return nil, fmt.Errorf("ledger: %q: %w", l.path, err)
	}
	defer rows.Close()
	var out []ReviewEntry
	for rows.Next() {
		var e ReviewEntry
		var at string
		if err := rows.Scan(&e.ID, &e.Rel, &e.SHA256, &e.Kind, &e.Item, &e.Old, &e.New, &e.Note, &e.Who, &at, &e.Undoes, &e.UndoneBy); err != nil {
			return nil, fmt.Errorf("ledger: %q: %w", l.path, err)
		}
		e.At, _ = time.Parse(time.RFC3339Nano, at)
		out = append(out, e)
	}
	return out, rows.Err()
}

// DataVersion changes whenever another connection (another process: a
// run, a merge) commits to the ledger; a reader caches the pages while it
// stays the same (SQLite's PRAGMA data_version).
func (l *Ledger) DataVersion(ctx context.Context) (int64, error) {
	var v int64
	if err := l.db.QueryRowContext(ctx, `PRAGMA data_version`).Scan(&v); err != nil {
		return 0, fmt.Errorf("ledger: %q: %w", l.path, err)
	}
	return v, nil
}
