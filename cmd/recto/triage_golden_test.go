package main

import (
	"flag"
	"os"
	"strings"
	"testing"
)

var updateTriageGolden = flag.Bool("update-triage", false, "rewrite testdata/triage/golden-*.txt")

// TestTriageGolden runs triage over the vendored held-out sample and
// compares the report with the golden files (refresh with
// go test ./cmd/recto -run TestTriageGolden -update-triage after changing
// the model or the rules, and review the diff).
func TestTriageGolden(t *testing.T) {
	// Text only: it rounds to 0.1 %, so floating-point differences between
	// architectures do not show; the JSON shape is checked in TestTriageCommand.
	for _, format := range []string{"text"} {
		t.Run(format, func(t *testing.T) {
			out, stderr, err := runRecto(t, "triage", "--format", format, "../../testdata/triage/ocr")
			if err != nil {
				t.Fatalf("%v\n%s", err, stderr)
			}
			golden := "../../testdata/triage/golden-" + format + ".txt"
			if *updateTriageGolden {
				if err := os.WriteFile(golden, []byte(out), 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(golden)
			if err != nil {
				t.Fatal(err)
			}
			if out != string(want) {
				got, exp := strings.Split(out, "\n"), strings.Split(string(want), "\n")
				for i := 0; i < max(len(got), len(exp)); i++ {
					var g, e string
					if i < len(got) {
						g = got[i]
					}
					if i < len(exp) {
						e = exp[i]
					}
					if g != e {
						t.Errorf("line %d:\n got %q\nwant %q", i+1, g, e)
					}
				}
			}
		})
	}
}
