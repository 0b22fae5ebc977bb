package walk

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"
)

// tree makes the files (and, for names ending in "/", the folders) under a
// new root and returns it.
func tree(t *testing.T, names ...string) string {
	t.Helper()
	root := filepath.Join(t.TempDir(), "in")
	for _, name := range names {
		p := filepath.Join(root, filepath.FromSlash(name))
		if strings.HasSuffix(name, "/") {
			if err := os.MkdirAll(p, 0o755); err != nil {
				t.Fatal(err)
			}
			continue
		}
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return root
}

func isText(name string) bool { return strings.HasSuffix(name, ".txt") }

// naive lists what Files should list, the obvious way: every regular file
// or symbolic link under root, by filepath.Walk (the standard library's
// older walker, which follows the same lexical order: Go documentation,
// path/filepath.Walk), with no path element starting with "." and not
// under skip, whose name matches.
func naive(t *testing.T, root, skip string, match func(string) bool) []string {
	t.Helper()
	var out []string
	err := filepath.Walk(root, func(p string, fi os.FileInfo, err error) error {
		if err != nil || p == root || fi.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(root, p)
		rel = filepath.ToSlash(rel)
		if skip != "" && (rel == skip || strings.HasPrefix(rel, skip+"/")) {
			return nil
		}
		for _, e := range strings.Split(rel, "/") {
			if strings.HasPrefix(e, ".") {
				return nil
			}
		}
		if m := fi.Mode(); !m.IsRegular() && m&fs.ModeSymlink == 0 || !match(fi.Name()) {
			return nil
		}
		out = append(out, rel)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	slices.Sort(out)
	return out
}

// TestFiles: the entries left out are the hidden ones (names starting with
// ".": common practice on POSIX systems, where ls leaves them out), the
// skip folder, files that do not match and non-regular files (a named pipe
// would block a reader: POSIX open(2) on a FIFO), and the result equals the
// naive listing.
func TestFiles(t *testing.T) {
	root := tree(t,
		"a/p1.txt", "a/p1.png", "a/b/p2.txt", "a.b/p3.txt", "p0.txt", ".hidden/p9.txt", "a/.p8.txt",
		"out/p7.txt", "folder.txt/p6.txt", "empty/")
	if err := syscall.Mkfifo(filepath.Join(root, "a", "pipe.txt"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(filepath.Join(root, "a", "p1.txt"), filepath.Join(root, "link.txt")); err != nil {
		t.Fatal(err)
	}
	var bad []string
	got, ignored, err := Files(root, Options{Match: isText, Skip: filepath.Join(root, "out"), Bad: func(p string, err error) {
		rel, _ := filepath.Rel(root, p)
		bad = append(bad, filepath.ToSlash(rel)+": "+err.Error())
	}})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"a.b/p3.txt", "a/b/p2.txt", "a/p1.txt", "folder.txt/p6.txt", "link.txt", "p0.txt"}
	if !slices.Equal(got, want) {
		t.Errorf("Files = %q, want %q", got, want)
	}
	if n := naive(t, root, "out", isText); !slices.Equal(got, n) {
		t.Errorf("Files = %q, naive listing %q", got, n)
	}
	if ignored != 2 { // a/p1.png, a/pipe.txt
		t.Errorf("ignored %d, want 2 (a/p1.png, a/pipe.txt)", ignored)
	}
	if want := []string{"folder.txt: " + ErrIsFolder.Error()}; !slices.Equal(bad, want) {
		t.Errorf("bad = %q, want %q", bad, want)
	}

	// Skip given by another spelling of the same folder.
	got, _, err = Files(root, Options{Match: isText, Skip: filepath.Join(root, "a", "..", "out") + "/"})
	if err != nil || slices.Contains(got, "out/p7.txt") {
		t.Errorf("skip by another spelling: %q, %v", got, err)
	}
	// No Match: every file; no Skip: out/ is walked.
	got, _, err = Files(root, Options{})
	if err != nil || !slices.Contains(got, "a/p1.png") || !slices.Contains(got, "out/p7.txt") {
		t.Errorf("zero Options: %q, %v", got, err)
	}
}

// TestFilesErrors: a root that cannot be read is an error naming it; a
// sub-folder that cannot be read stops the walk only when Bad is nil.
func TestFilesErrors(t *testing.T) {
	_, _, err := Files(filepath.Join(t.TempDir(), "absent"), Options{Bad: func(string, error) {}})
	if !errors.Is(err, fs.ErrNotExist) || !strings.Contains(err.Error(), "absent") {
		t.Errorf("missing root: %v, want a not-exist error naming it", err)
	}
	if os.Geteuid() == 0 {
		t.Skip("running as root: a folder with mode 0 stays readable")
	}
	root := tree(t, "a/p1.txt", "locked/p2.txt")
	locked := filepath.Join(root, "locked")
	if err := os.Chmod(locked, 0); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { os.Chmod(locked, 0o755) })
	var bad []string
	got, _, err := Files(root, Options{Match: isText, Bad: func(p string, err error) { bad = append(bad, p) }})
	if err != nil || !slices.Equal(got, []string{"a/p1.txt"}) || !slices.Equal(bad, []string{locked}) {
		t.Errorf("with Bad: %q, bad %q, err %v; want [a/p1.txt], [%s], nil", got, bad, err, locked)
	}
	if _, _, err := Files(root, Options{Match: isText}); !errors.Is(err, fs.ErrPermission) {
		t.Errorf("without Bad: err %v, want a permission error", err)
	}
}
