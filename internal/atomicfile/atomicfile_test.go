package atomicfile

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// The contract checked here is POSIX rename(2): the destination is
// replaced in one step (IEEE Std 1003.1-2017, rename), so before the rename
// the old content is intact; the mode is 0644 masked by the umask as
// open(2) with O_CREAT does it (the same standard, open).
func TestWrite(t *testing.T) {
	old := syscall.Umask(0o022)
	defer syscall.Umask(old)
	dir := t.TempDir()
	name := filepath.Join(dir, "a", "b", "page.txt")
	if err := Write(name, []byte("first")); err != nil {
		t.Fatal(err)
	}
	if err := os.Chmod(name, 0o600); err != nil { // a file left private by an older writer
		t.Fatal(err)
	}
	if err := Write(name, []byte("second")); err != nil {
		t.Fatal(err)
	}
	got, _ := os.ReadFile(name)
	fi, _ := os.Stat(name)
	if string(got) != "second" || fi.Mode().Perm() != 0o644 {
		t.Errorf("got %q mode %v, want \"second\" mode 0644", got, fi.Mode().Perm())
	}
	left, _ := os.ReadDir(filepath.Dir(name))
	if len(left) != 1 {
		t.Errorf("folder holds %d entries, want only page.txt (no temporary file left)", len(left))
	}
}

func TestWriteFuncFailureKeepsOld(t *testing.T) {
	name := filepath.Join(t.TempDir(), "titles.csv")
	if err := Write(name, []byte("old")); err != nil {
		t.Fatal(err)
	}
	boom := errors.New("boom")
	err := WriteFunc(name, func(w io.Writer) error {
		io.WriteString(w, "half")
		return boom
	})
	if !errors.Is(err, boom) || !strings.Contains(err.Error(), name) {
		t.Errorf("error %v: want it to wrap the cause and name %q", err, name)
	}
	got, _ := os.ReadFile(name)
	left, _ := os.ReadDir(filepath.Dir(name))
	if string(got) != "old" || len(left) != 1 {
		t.Errorf("after a failed write: %q and %d entries, want \"old\" and 1", got, len(left))
	}
}

func TestWriteNamesFileOnError(t *testing.T) {
	dir := t.TempDir()
	block := filepath.Join(dir, "file")
	os.WriteFile(block, nil, 0o644)
	err := Write(filepath.Join(block, "x.txt"), []byte("x")) // parent is a file
	if err == nil || !strings.Contains(err.Error(), filepath.Join(block, "x.txt")) || strings.Contains(err.Error(), ".x.txt") {
		t.Errorf("error %v: want one naming the destination, not the temporary file", err)
	}
}
