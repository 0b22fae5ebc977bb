package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCorrectCountsAgree: the summary line's nouns agree with their
// numbers (English takes the singular for one only, zero included in the
// plural: common practice), issue 17 part 2.
func TestCorrectCountsAgree(t *testing.T) {
	for _, tc := range []struct {
		pages []string
		want  string
	}{
		{[]string{"the tbe whale\n"}, "1 change in 1 page"},
		{[]string{"the whale\n"}, "0 changes in 1 page"},
		{[]string{"tbe whale\n", "tbe sea\n"}, "2 changes in 2 pages"},
	} {
		in := t.TempDir()
		for i, p := range tc.pages {
			os.WriteFile(filepath.Join(in, string(rune('a'+i))+".txt"), []byte(p), 0o644)
		}
		_, stderr, err := runRecto(t, "correct", in, "--dry-run")
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(stderr, tc.want) {
			t.Errorf("stderr %q, want %q", stderr, tc.want)
		}
	}
}
