package ledger

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"net/url"
	"os"
	"path/filepath"
	"sort"
	"time"

	"recto/cmd/internal/run/fname"

	_ "modernc.org/sqlite" // registers the "sqlite" database/sql driver
)

// FileName is the ledger's file name inside a run folder.
const FileName = "ledger.db"

// SchemaVersion is the version of the tables written by this build.
// Version 2 added the problem column and the state gone; version 3 the
// order-free error counts (flex_errs, bag_errs and their _after). An older
// ledger is upgraded in place when opened for writing; its pages keep -1 in
// the new counts (not measured), and those with ground truth get another
// settings fingerprint, so the next run does them again and measures them.
const SchemaVersion = 3

// ErrLocked is returned by Open when another process holds the ledger's lock.
var ErrLocked = errors.New("ledger: in use by another recto process")

var errLockHeld = errors.New("lock held")

// State is the outcome of a page.
type State string

const (
	StateDone   State = "done"   // every step ran; outputs and metrics are recorded
	StateFailed State = "failed" // a step failed; Error says why; redone by the next run
	// StateGone marks a page whose image is no longer in the collection
	// (deleted, renamed, or another collection was run into the folder).
	// The row and its outputs are kept; reports leave it out.
	StateGone State = "gone"
)

// Problem says what a failed page needs.
type Problem string

const (
	// ProblemImage: the image itself is at fault (unreadable, empty,
	// truncated, not an image): the page goes to the scanning station.
	ProblemImage Problem = "image"
	// ProblemSetup: the system or the run's set-up is at fault (a full
	// or read-only disk, a name too long, a clash of names, a ground-truth
	// path that is a folder, an image over the pixel limit, a missing
	// engine); the scan is not to blame and Error says how to fix it.
	ProblemSetup Problem = "setup"
)

// Page is one row of the ledger: everything a run learnt about one page image.
type Page struct {
	Rel    string // path relative to the collection root, slash-separated; the key
	Title  string // first-level folder under the collection root
	Page   string // page name within the title
	Source string // path of the image as read
	SHA256 string // hex SHA-256 of the image bytes
	Size   int64  // image size, bytes
	Config string // fingerprint of the settings that produced the row
	Shard  string // "i/n" when written by a sharded run, else ""

	State   State
	Error   string  // why the page failed; "" when done
	Problem Problem // for a failed page, whose fault it is; "" when done
	// Warnings are what a step said about the page that did not stop it
	// (a multi-page file of which one page was read, ...).
	Warnings []string

	Decision     string   // accept, correct, rescan, blank or picture
	PredictedCER float64  // estimated CER without ground truth, in [0, 1]
	Reasons      []string // why the decision was taken
	MeanConf     float64  // mean engine word confidence in [0, 1]
	Words        int      // recognised words
	Corrections  int      // words changed by correction

	HasTruth   bool // ground truth was found and scored
	RefChars   int  // reference characters (code points)
	RefWords   int  // reference words
	CharErrs   int  // character edits, engine output against the reference
	WordErrs   int  // word edits, engine output against the reference
	CharErrsAf int  // character edits after correction (equal to CharErrs when not corrected)
	WordErrsAf int  // word edits after correction

	// Order-free errors (quality.Counts): errors of the flexible character
	// accuracy over RefChars and bag-of-words errors over RefWords, before
	// and after correction; -1 in rows written before they were measured
	// (schema 2 and older).
	FlexErrs   int
	BagErrs    int
	FlexErrsAf int
	BagErrsAf  int

	Outputs []string           // files written, relative to the run folder, slash-separated
	Timings map[string]float64 // milliseconds per step
	Done    time.Time          // when the row was committed (UTC)
}

// Same reports whether p and q carry the same results: every field but
// Source, Shard, Timings and Done, which depend on where and when the page
// ran. Used to compare ledgers of runs that should agree.
func (p Page) Same(q Page) bool {
	p.Source, q.Source = "", ""
	p.Shard, q.Shard = "", ""
	p.Timings, q.Timings = nil, nil
	p.Done, q.Done = time.Time{}, time.Time{}
	a, _ := json.Marshal(p)
	b, _ := json.Marshal(q)
	return string(a) == string(b)
}

// Ledger is an open ledger. Its methods are safe for concurrent use, but a
// run should write through one Writer.
type Ledger struct {
	db       *sql.DB
	path     string
	lock     *os.File
	readOnly bool

	// BeforeCommit, when set before NewWriter, is called by the writer with
	// each group of pages before it commits them; an error stops the
	// writer as a failed commit would. Tests inject faults with it.
	BeforeCommit func([]Page) error
}

const schema = `
CREATE TABLE IF NOT EXISTS meta (
	key   TEXT PRIMARY KEY,
	value TEXT NOT NULL
);
CREATE TABLE IF NOT EXISTS pages (
	rel           TEXT PRIMARY KEY,
	title         TEXT NOT NULL,
	page          TEXT NOT NULL,
	source        TEXT NOT NULL,
	sha256        TEXT NOT NULL,
	size          INTEGER NOT NULL,
	config        TEXT NOT NULL,
	shard         TEXT NOT NULL,
	state         TEXT NOT NULL,
	error         TEXT NOT NULL,
	decision      TEXT NOT NULL,
	predicted_cer REAL NOT NULL,
	reasons       TEXT NOT NULL,
	mean_conf     REAL NOT NULL,
	words         INTEGER NOT NULL,
	corrections   INTEGER NOT NULL,
	has_truth     INTEGER NOT NULL,
	ref_chars     INTEGER NOT NULL,
	ref_words     INTEGER NOT NULL,
	char_errs     INTEGER NOT NULL,
	word_errs     INTEGER NOT NULL,
	char_errs_after INTEGER NOT NULL,
	word_errs_after INTEGER NOT NULL,
	outputs       TEXT NOT NULL,
	timings       TEXT NOT NULL,
	done_at       TEXT NOT NULL,
	problem       TEXT NOT NULL DEFAULT '',
	warnings      TEXT NOT NULL DEFAULT '[]',
	flex_errs     INTEGER NOT NULL DEFAULT -1,
	bag_errs      INTEGER NOT NULL DEFAULT -1,
	flex_errs_after INTEGER NOT NULL DEFAULT -1,
	bag_errs_after  INTEGER NOT NULL DEFAULT -1
);`

// upgrades take a ledger from the version in their key to the next.
var upgrades = map[string]string{
	"1": `ALTER TABLE pages ADD COLUMN problem TEXT NOT NULL DEFAULT '';
		ALTER TABLE pages ADD COLUMN warnings TEXT NOT NULL DEFAULT '[]';
		UPDATE meta SET value = '2' WHERE key = 'schema';`,
	"2": `ALTER TABLE pages ADD COLUMN flex_errs INTEGER NOT NULL DEFAULT -1;
		ALTER TABLE pages ADD COLUMN bag_errs INTEGER NOT NULL DEFAULT -1;
		ALTER TABLE pages ADD COLUMN flex_errs_after INTEGER NOT NULL DEFAULT -1;
		ALTER TABLE pages ADD COLUMN bag_errs_after INTEGER NOT NULL DEFAULT -1;
		UPDATE pages SET config = config || '+scored-before-v3' WHERE has_truth = 1;
		UPDATE meta SET value = '3' WHERE key = 'schema';`,
}

// Open opens the ledger at path for writing, creating it (and its folder)
// when missing, and takes its lock. It returns an error wrapping ErrLocked
// when another process has it open for writing.
func Open(path string) (*Ledger, error) {
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return nil, fmt.Errorf("ledger: %w", err)
	}
	lockPath := path + ".lock"
	lf, err := os.OpenFile(lockPath, os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, fmt.Errorf("ledger: cannot create lock file: %w", err)
	}
	if err := lockFile(lf); err != nil {
		lf.Close()
		if errors.Is(err, errLockHeld) {
			return nil, fmt.Errorf("%w: %q is being written by another run (lock %q); wait for it to finish or choose another --out", ErrLocked, path, lockPath)
		}
		return nil, fmt.Errorf("ledger: lock %q: %w", lockPath, err)
	}
	// Record who holds the lock, for a person looking at the folder; the
	// flock itself is what counts.
	_ = lf.Truncate(0)
	_, _ = fmt.Fprintf(lf, "pid %d\n", os.Getpid())

	l, err := openDB(path, false)
	if err != nil {
		lf.Close()
		return nil, err
	}
	l.lock = lf
	return l, nil
}

// OpenReadOnly opens an existing ledger for reading without taking its
// lock; a run may be writing it at the same time (WAL readers see the last
// committed pages).
func OpenReadOnly(path string) (*Ledger, error) {
	if _, err := os.Stat(path); err != nil {
		return nil, fmt.Errorf("ledger: %w", err)
	}
	return openDB(path, true)
}

// dsn is the database/sql name of the ledger at path: a 10 s busy
// timeout; read-only, or WAL with a sync per commit; with immediate,
// every transaction takes the write lock when it begins.
func dsn(path string, readOnly, immediate bool) string {
	q := url.Values{}
	q.Add("_pragma", "busy_timeout(10000)")
	if readOnly {
		q.Add("mode", "ro")
	} else {
		q.Add("_pragma", "journal_mode(WAL)")
		q.Add("_pragma", "synchronous(FULL)")
		if immediate {
			q.Add("_txlock", "immediate")
		}
	}
	return "file:" + path + "?" + q.Encode()
}

func openDB(path string, readOnly bool) (*Ledger, error) {
	db, err := sql.Open("sqlite", dsn(path, readOnly, false))
	if err != nil {
		return nil, fmt.Errorf("ledger: %q: %w", path, err)
	}
	db.SetMaxOpenConns(1) // one connection: writes are serialised anyway
	l := &Ledger{db: db, path: path, readOnly: readOnly}
	if !readOnly {
		if _, err := db.Exec(schema); err != nil {
			db.Close()
			if d := describe(path, err); d != err {
				return nil, d
			}
			return nil, fmt.Errorf("%w: %q is not a usable ledger (%v); move it aside (mv %q %q) and run again: the outputs beside it are kept and every page is read again",
				ErrDamaged, path, err, path, path+".damaged")
		}
		var v string
		err := db.QueryRow(`SELECT value FROM meta WHERE key = 'schema'`).Scan(&v)
		switch {
		case errors.Is(err, sql.ErrNoRows):
			_, err = db.Exec(`INSERT INTO meta(key, value) VALUES('schema', ?)`, fmt.Sprint(SchemaVersion))
		case err == nil:
			for err == nil && v != fmt.Sprint(SchemaVersion) { // one upgrade after the other
				up, ok := upgrades[v]
				if !ok {
					err = fmt.Errorf("schema version %s, this build writes version %d: use the recto that wrote it, or start a new --out folder", v, SchemaVersion)
					break
				}
				if _, err = db.Exec(up); err == nil {
					err = db.QueryRow(`SELECT value FROM meta WHERE key = 'schema'`).Scan(&v)
				}
			}
		}
		if err != nil {
			db.Close()
			if d := describe(path, err); d != err {
				return nil, d
			}
			return nil, fmt.Errorf("ledger: %q: %w", path, err)
		}
	} else if err := db.Ping(); err != nil {
		db.Close()
		return nil, fmt.Errorf("ledger: %q: %w", path, err)
	}
	return l, nil
}

// Path returns the ledger's file path.
func (l *Ledger) Path() string { return l.path }

// Close closes the database and releases the lock.
func (l *Ledger) Close() error {
	err := l.db.Close()
	if l.lock != nil {
		if cerr := l.lock.Close(); err == nil {
			err = cerr
		}
	}
	return err
}

// SetMeta records a run-level value (collection root, settings, shard).
func (l *Ledger) SetMeta(ctx context.Context, key, value string) error {
	_, err := l.db.ExecContext(ctx, `INSERT INTO meta(key, value) VALUES(?, ?)
		ON CONFLICT(key) DO UPDATE SET value = excluded.value`, key, value)
	if err != nil {
		return fmt.Errorf("ledger: %w", err)
	}
	return nil
}

// Meta returns a run-level value, "" when unset.
func (l *Ledger) Meta(ctx context.Context, key string) (string, error) {
	var v string
	err := l.db.QueryRowContext(ctx, `SELECT value FROM meta WHERE key = ?`, key).Scan(&v)
	if errors.Is(err, sql.ErrNoRows) {
		return "", nil
	}
	if err != nil {
		return "", fmt.Errorf("ledger: %w", err)
	}
	return v, nil
}

// Put inserts or replaces the row of p.Rel in one committed transaction.
func (l *Ledger) Put(ctx context.Context, p Page) error { return l.PutAll(ctx, []Page{p}) }

// PutAll inserts or replaces the rows of ps in one committed transaction:
// all or none of them are in the ledger afterwards.
func (l *Ledger) PutAll(ctx context.Context, ps []Page) error {
	tx, err := l.db.BeginTx(ctx, nil)
	if err != nil {
		return describe(l.path, fmt.Errorf("ledger: %w", err))
	}
	for _, p := range ps {
		if err := putTx(ctx, tx, p); err != nil {
			tx.Rollback()
			return describe(l.path, err)
		}
	}
	if err := tx.Commit(); err != nil {
		if d := describe(l.path, err); d != err {
			return d
		}
		return fmt.Errorf("ledger: commit of %d pages: %w", len(ps), err)
	}
	return nil
}

const insertSQL = `INSERT OR REPLACE INTO pages(rel, title, page, source, sha256, size, config, shard,
	state, error, decision, predicted_cer, reasons, mean_conf, words, corrections,
	has_truth, ref_chars, ref_words, char_errs, word_errs, char_errs_after, word_errs_after,
	outputs, timings, done_at, problem, warnings, flex_errs, bag_errs, flex_errs_after, bag_errs_after)
	VALUES(?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?)`

func putTx(ctx context.Context, tx *sql.Tx, p Page) error {
	reasons, _ := json.Marshal(nonNil(p.Reasons))
	// Output names are paths and may hold bytes that are not UTF-8, which
	// JSON cannot carry: they are stored escaped (package fname).
	esc := make([]string, len(p.Outputs))
	for i, o := range p.Outputs {
		esc[i] = fname.Escape(o)
	}
	outputs, _ := json.Marshal(esc)
	warnings, _ := json.Marshal(nonNil(p.Warnings))
	timings, err := json.Marshal(p.Timings)
	if err != nil { // NaN or Inf timings
		return fmt.Errorf("ledger: %q: timings: %w", p.Rel, err)
	}
	done := p.Done
	if done.IsZero() {
		done = time.Now()
	}
	_, err = tx.ExecContext(ctx, insertSQL, p.Rel, p.Title, p.Page, p.Source, p.SHA256, p.Size, p.Config, p.Shard,
		string(p.State), p.Error, p.Decision, p.PredictedCER, string(reasons), p.MeanConf, p.Words, p.Corrections,
		p.HasTruth, p.RefChars, p.RefWords, p.CharErrs, p.WordErrs, p.CharErrsAf, p.WordErrsAf,
		string(outputs), string(timings), done.UTC().Format(time.RFC3339Nano), string(p.Problem), string(warnings),
		p.FlexErrs, p.BagErrs, p.FlexErrsAf, p.BagErrsAf)
	if err != nil {
		return fmt.Errorf("ledger: write %q: %w", p.Rel, err)
	}
	return nil
}

func nonNil(s []string) []string {
	if s == nil {
		return []string{}
	}
	return s
}

// Pages returns every row, sorted by Rel.
func (l *Ledger) Pages(ctx context.Context) ([]Page, error) {
	rows, err := l.db.QueryContext(ctx, `SELECT rel, title, page, source, sha256, size, config, shard,
		state, error, decision, predicted_cer, reasons, mean_conf, words, corrections,
		has_truth, ref_chars, ref_words, char_errs, word_errs, char_errs_after, word_errs_after,
		outputs, timings, done_at, problem, warnings, flex_errs, bag_errs, flex_errs_after, bag_errs_after
		FROM pages ORDER BY rel`)
	if err != nil {
		return nil, fmt.Errorf("ledger: %q: %w", l.path, err)
	}
	defer rows.Close()
	var out []Page
	for rows.Next() {
		var p Page
		var state, reasons, outputs, timings, done, problem, warnings string
		if err := rows.Scan(&p.Rel, &p.Title, &p.Page, &p.Source, &p.SHA256, &p.Size, &p.Config, &p.Shard,
			&state, &p.Error, &p.Decision, &p.PredictedCER, &reasons, &p.MeanConf, &p.Words, &p.Corrections,
			&p.HasTruth, &p.RefChars, &p.RefWords, &p.CharErrs, &p.WordErrs, &p.CharErrsAf, &p.WordErrsAf,
			&outputs, &timings, &done, &problem, &warnings, &p.FlexErrs, &p.BagErrs, &p.FlexErrsAf, &p.BagErrsAf); err != nil {
			return nil, fmt.Errorf("ledger: %q: %w", l.path, err)
		}
		p.State, p.Problem = State(state), Problem(problem)
		if err := json.Unmarshal([]byte(warnings), &p.Warnings); err != nil {
			return nil, fmt.Errorf("ledger: %q: page %q: warnings: %w", l.path, p.Rel, err)
		}
		if len(p.Warnings) == 0 {
			p.Warnings = nil
		}
		if err := json.Unmarshal([]byte(reasons), &p.Reasons); err != nil {
			return nil, fmt.Errorf("ledger: %q: page %q: reasons: %w", l.path, p.Rel, err)
		}
		if err := json.Unmarshal([]byte(outputs), &p.Outputs); err != nil {
			return nil, fmt.Errorf("ledger: %q: page %q: outputs: %w", l.path, p.Rel, err)
		}
		for i, o := range p.Outputs {
			if raw, err := fname.Unescape(o); err == nil {
				p.Outputs[i] = raw
			}
		}
		if err := json.Unmarshal([]byte(timings), &p.Timings); err != nil {
			return nil, fmt.Errorf("ledger: %q: page %q: timings: %w", l.path, p.Rel, err)
		}
		p.Done, _ = time.Parse(time.RFC3339Nano, done)
		if len(p.Reasons) == 0 {
			p.Reasons = nil
		}
		if len(p.Outputs) == 0 {
			p.Outputs = nil
		}
		out = append(out, p)
	}
	if err := rows.Err(); err != nil {
		return nil, fmt.Errorf("ledger: %q: %w", l.path, err)
	}
	return out, nil
}

// MarkGone sets the rows of rels to state gone in one transaction,
// keeping everything else they hold.
func (l *Ledger) MarkGone(ctx context.Context, rels []string) error {
	tx, err := l.db.BeginTx(ctx, nil)
	if err != nil {
		return describe(l.path, fmt.Errorf("ledger: %w", err))
	}
	for _, r := range rels {
		if _, err := tx.ExecContext(ctx, `UPDATE pages SET state = ? WHERE rel = ?`, string(StateGone), r); err != nil {
			tx.Rollback()
			return describe(l.path, fmt.Errorf("ledger: %w", err))
		}
	}
	if err := tx.Commit(); err != nil {
		return describe(l.path, fmt.Errorf("ledger: %w", err))
	}
	return nil
}

// Key identifies what a done page was computed from.
type Key struct {
	SHA256 string
	Config string
}

// DoneKeys returns, for every page in state done, the input hash and
// settings fingerprint it was computed from. A run skips a page whose
// current Key is equal.
func (l *Ledger) DoneKeys(ctx context.Context) (map[string]Key, error) {
	rows, err := l.db.QueryContext(ctx, `SELECT rel, sha256, config FROM pages WHERE state = ?`, string(StateDone))
	if err != nil {
		return nil, fmt.Errorf("ledger: %q: %w", l.path, err)
	}
	defer rows.Close()
	m := make(map[string]Key)
	for rows.Next() {
		var rel string
		var k Key
		if err := rows.Scan(&rel, &k.SHA256, &k.Config); err != nil {
			return nil, fmt.Errorf("ledger: %q: %w", l.path, err)
		}
		m[rel] = k
	}
	return m, rows.Err()
}

// Merge copies every page of the ledgers at srcs into l in one
// transaction. When a page appears more than once (in l or in several
// sources), a done row wins over a failed one, then the later Done time.
// It returns the number of rows copied.
func (l *Ledger) Merge(ctx context.Context, srcs ...string) (int, error) {
	existing, err := l.Pages(ctx)
	if err != nil {
		return 0, err
	}
	best := make(map[string]Page, len(existing))
	for _, p := range existing {
		best[p.Rel] = p
	}
	changed := make(map[string]bool)
	for _, src := range srcs {
		s, err := OpenReadOnly(src)
		if err != nil {
			return 0, err
		}
		pages, err := s.Pages(ctx)
		s.Close()
		if err != nil {
			return 0, err
		}
		for _, p := range pages {
			if old, ok := best[p.Rel]; ok && !better(p, old) {
				continue
			}
			best[p.Rel] = p
			changed[p.Rel] = true
		}
	}
	rels := make([]string, 0, len(changed))
	for r := range changed {
		rels = append(rels, r)
	}
	sort.Strings(rels)
	tx, err := l.db.BeginTx(ctx, nil)
	if err != nil {
		return 0, fmt.Errorf("ledger: %w", err)
	}
	for _, r := range rels {
		if err := putTx(ctx, tx, best[r]); err != nil {
			tx.Rollback()
			return 0, err
		}
	}
	if err := tx.Commit(); err != nil {
		return 0, fmt.Errorf("ledger: merge into %q: %w", l.path, err)
	}
	return len(rels), nil
}

// better reports whether p should replace q in a merge.
func better(p, q Page) bool {
	if (p.State == StateDone) != (q.State == StateDone) {
		return p.State == StateDone
	}
	return p.Done.After(q.Done)
}
