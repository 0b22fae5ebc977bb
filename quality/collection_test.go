package quality

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"testing"
)

const fixture = "../testdata/score/collection"

// TestScoreDirsDeterministic: the report does not depend on the number of
// workers (results are kept by index, confusions sorted).
func TestScoreDirsDeterministic(t *testing.T) {
	var reps []*Report
	for _, w := range []int{1, 3} {
		rep, err := ScoreDirs(context.Background(), fixture+"/truth", fixture+"/ocr", DirConfig{Workers: w, Confusions: 50})
		if err != nil {
			t.Fatal(err)
		}
		reps = append(reps, rep)
	}
	if !reflect.DeepEqual(reps[0], reps[1]) {
		t.Errorf("reports differ between 1 and 3 workers:\n%+v\n%+v", reps[0], reps[1])
	}
	rep := reps[0]
	if !rep.Partial() || len(rep.Pages) != 7 || len(rep.Failed) != 3 {
		t.Errorf("pages %d, failed %d, partial %v; want 7, 3, true", len(rep.Pages), len(rep.Failed), rep.Partial())
	}
	var sum Counts
	for _, p := range rep.Pages {
		sum = sum.Add(p.Counts)
	}
	if sum != rep.Total {
		t.Errorf("total %+v is not the sum of the pages %+v", rep.Total, sum)
	}
	var fe *FileError
	for _, f := range rep.Failed {
		if errors.Is(f, ErrInvalidUTF8) && errors.As(f, &fe) && fe.Offset != 37 {
			t.Errorf("invalid UTF-8 offset %d, want 37", fe.Offset)
		}
	}
}

func TestScoreDirsCancelled(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	rep, err := ScoreDirs(ctx, fixture+"/truth", fixture+"/ocr", DirConfig{})
	if rep != nil || !errors.Is(err, context.Canceled) {
		t.Errorf("ScoreDirs on a cancelled context = %v, %v; want nil, context.Canceled", rep, err)
	}
}

func TestInvalidUTF8Offset(t *testing.T) {
	for _, tt := range []struct {
		in   string
		want int
	}{
		{"plain", -1}, {"\xff", 0}, {"ab\xc3", 2}, {"é\xe2\x80", 2}, {"ok \xed\xa0\x80", 3}, // a surrogate is invalid UTF-8 (RFC 3629)
	} {
		if got := invalidUTF8([]byte(tt.in)); got != tt.want {
			t.Errorf("invalidUTF8(%q) = %d, want %d", tt.in, got, tt.want)
		}
	}
}

// TestScoreDirsNestedRoots: OCR output kept inside the ground-truth folder
// is not taken for ground truth.
func TestScoreDirsNestedRoots(t *testing.T) {
	dir := t.TempDir()
	mustWrite(t, filepath.Join(dir, "gt", "vol1", "p1.txt"), "Corvane Mill")
	mustWrite(t, filepath.Join(dir, "gt", "ocr", "vol1", "p1.txt"), "Corvane MiII")
	rep, err := ScoreDirs(context.Background(), filepath.Join(dir, "gt"), filepath.Join(dir, "gt", "ocr"), DirConfig{})
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Pages) != 1 || rep.Pages[0].Page != "vol1/p1" || rep.Pages[0].CharErrors != 2 || rep.Partial() {
		t.Errorf("pages %+v, partial %v; want only vol1/p1 with 2 errors", rep.Pages, rep.Partial())
	}
}

func mustWrite(t *testing.T, path, text string) {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
}
