// Package atomicfile is recto's one way of writing a file: the data go to a
// temporary file in the destination's folder, are flushed to disk (fsync)
// and renamed over the destination, so a reader sees the old file or the
// new one, never half of one, and a crash leaves no partial output. It
// wraps github.com/google/renameio/v2.
//
// Files get mode 0644 less the process umask (as os.WriteFile gives), also
// when they replace an existing file; missing parent folders are created
// with mode 0755 less the umask.
package atomicfile

import (
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/google/renameio/v2"
)

// Mode is the permission of every file written.
const Mode os.FileMode = 0o644

// Write writes data to path atomically. Its error names the file.
func Write(path string, data []byte) error {
	return WriteFunc(path, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}

// WriteFunc writes what fill writes to path atomically; when fill returns
// an error, path is left as it was and the error is returned, naming the
// file.
func WriteFunc(path string, fill func(io.Writer) error) error {
	dir := filepath.Dir(path)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("write %q: %w", path, unwrapPath(err))
	}
	// The temporary file goes in dir itself: renameio's default probes
	// $TMPDIR with two extra files per call.
	f, err := renameio.NewPendingFile(path, renameio.WithTempDir(dir), renameio.WithPermissions(Mode))
	if err != nil {
		return fmt.Errorf("write %q: %w", path, unwrapPath(err))
	}
	defer f.Cleanup()
	if err := fill(f); err != nil {
		return fmt.Errorf("write %q: %w", path, unwrapPath(err))
	}
	if err := f.CloseAtomicallyReplace(); err != nil {
		return fmt.Errorf("write %q: %w", path, unwrapPath(err))
	}
	return nil
}

// unwrapPath drops the *fs.PathError around err: the message names the
// destination already, not the temporary file.
func unwrapPath(err error) error {
	if pe, ok := err.(*os.PathError); ok {
		return pe.Err
	}
	if le, ok := err.(*os.LinkError); ok {
		return le.Err
	}
	return err
}
