package ledger

import (
	"errors"
	"fmt"
	"path/filepath"
)

// SQLite primary result codes (https://www.sqlite.org/rescode.html).
const (
	sqliteReadOnly = 8
	sqliteIOErr    = 10
	sqliteCorrupt  = 11
	sqliteFull     = 13
	sqliteCantOpen = 14
	sqliteNotADB   = 26
)

// ErrDamaged is wrapped by the error of a ledger file that is not a
// readable SQLite database.
var ErrDamaged = errors.New("ledger: damaged")

// ErrFolder is wrapped by errors whose cause is the folder the ledger is
// in (full, read-only, cannot be written), not the ledger itself.
var ErrFolder = errors.New("the run folder cannot be written")

// describe turns a database error about the ledger at path into a message
// that blames what is at fault and says what to do.
func describe(path string, err error) error {
	var c interface{ Code() int }
	if err == nil || !errors.As(err, &c) {
		return err
	}
	dir := filepath.Dir(path)
	switch c.Code() & 0xff {
	case sqliteFull:
		return fmt.Errorf("%w: the disk holding %q is full: free some space and run again (finished pages are kept)", ErrFolder, dir)
	case sqliteReadOnly, sqliteCantOpen:
		return fmt.Errorf("%w: %q is read-only or cannot be written: fix its permissions or choose another --out", ErrFolder, dir)
	case sqliteIOErr:
		return fmt.Errorf("%w: writing in %q failed (%v): check the disk and run again (finished pages are kept)", ErrFolder, dir, err)
	case sqliteCorrupt, sqliteNotADB:
		return fmt.Errorf("%w: %q is not a readable ledger (%v). The page outputs beside it are intact; "+
			"to start the ledger over without losing them, move it aside (mv %q %q) and run again: "+
			"every page is read again into the same folder and the reports are rebuilt",
			ErrDamaged, path, err, path, path+".damaged")
	}
	return err
}
