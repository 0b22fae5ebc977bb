package quality

import (
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/agnivade/levenshtein"
)

// TestLongTextPath checks the long-text path of Compare (longtext.go: a
// volume against a page, read from its string, and two long texts coded as
// bytes) against the code point path (Distance on rune slices, WordIDs,
// bagErrors; checked against agnivade/levenshtein and their own references
// in distance_test.go and bag_test.go), and the lopsided cases also against
// a general-purpose library directly, github.com/agnivade/levenshtein
// v1.2.2 (counts code points).
func TestLongTextPath(t *testing.T) {
	if testing.Short() {
		t.Skip(longSequential)
	}
	rng := rand.New(rand.NewPCG(20261203, 3))
	words := strings.Fields("the harbour master of Wrenmouth noted that northern quay was mended ærlig søndag Grüße ſtadt 語 😀")
	text := func(n int) string {
		var b strings.Builder
		for b.Len() < n {
			b.WriteString(words[rng.IntN(len(words))])
			b.WriteByte(" \n"[rng.IntN(2)])
		}
		return b.String()
	}
	volume := text(1 << 16)
	page := mutate(rng, volume[:1_000], 0.05)
	half := text(1 << 15)
	cases := []struct {
		name, ref, hyp string
		agnivade       bool
	}{
		{"volume against a page", volume, page, true},
		{"page against a volume", page, volume, true},
		{"volume against a page from its end", volume, mutate(rng, volume[len(volume)-1_000:], 0.05), true},
		{"long text against its reading", half, mutate(rng, half, 0.01), false},
	}
	var s Scratch
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if len(c.ref)+len(c.hyp) < longText {
				t.Fatalf("case too short for the long path: %d bytes", len(c.ref)+len(c.hyp))
			}
			got := s.Compare(c.ref, c.hyp, NormOptions{})
			ref, hyp := Normalize(c.ref, NormOptions{}), Normalize(c.hyp, NormOptions{})
			var r Scratch
			if want := r.Distance([]rune(ref), []rune(hyp)); got.CharErrors != want {
				t.Errorf("CharErrors = %d, the code point path says %d", got.CharErrors, want)
			}
			if c.agnivade {
				if want := levenshtein.ComputeDistance(ref, hyp); got.CharErrors != want {
					t.Errorf("CharErrors = %d, agnivade says %d", got.CharErrors, want)
				}
			}
			if want := len([]rune(ref)); got.Chars != want {
				t.Errorf("Chars = %d, want %d", got.Chars, want)
			}
			rw, hw := WordIDs(ref, hyp)
			if want := len(rw); got.Words != want {
				t.Errorf("Words = %d, want %d", got.Words, want)
			}
			if want := r.Distance(rw, hw); got.WordErrors != want {
				t.Errorf("WordErrors = %d, the code point path says %d", got.WordErrors, want)
			}
			if want := bagErrors(rw, hw); got.BagErrors != want {
				t.Errorf("BagErrors = %d, the code point path says %d", got.BagErrors, want)
			}
		})
	}
}

// TestTrimCommonString: the shared start and end are cut between code
// points only. "æ" (C3 A6) and "ø" (C3 B8) share their first byte, as do
// "å" (C3 A5) and "ø" at the end (UTF-8: RFC 3629, Yergeau, 2003).
func TestTrimCommonString(t *testing.T) {
	for _, c := range []struct{ a, b, wa, wb string }{
		{"ærlig", "ørlig", "æ", "ø"},
		{"blå", "blø", "å", "ø"},
		{"søndag", "søndag", "", ""},
		{"abc", "abcd", "", "d"},
		{"xå", "å", "x", ""},
	} {
		ga, gb := trimCommonString(c.a, c.b)
		if ga != c.wa || gb != c.wb {
			t.Errorf("trimCommonString(%q, %q) = %q, %q; want %q, %q", c.a, c.b, ga, gb, c.wa, c.wb)
		}
	}
}

// TestFlexSkippedOverLimit: a page too long for the flexible matching is
// flagged, and its flexible errors are its character errors, the upper
// bound that flexible errors never exceed (flex.go).
func TestFlexSkippedOverLimit(t *testing.T) {
	saved := flexMaxChars
	t.Cleanup(func() { flexMaxChars = saved })
	ref, hyp := "the northern quay\nwas mended", "the nortbern quay\nwas mendod"
	c := Compare(ref, hyp, NormOptions{})
	if c.FlexSkipped != 0 {
		t.Fatalf("FlexSkipped = %d within the limits", c.FlexSkipped)
	}
	flexMaxChars = 10
	c = Compare(ref, hyp, NormOptions{})
	if c.FlexSkipped != 1 || c.FlexErrors != c.CharErrors || c.CharErrors != 2 {
		t.Fatalf("over the limit: FlexSkipped=%d FlexErrors=%d CharErrors=%d, want 1, 2, 2", c.FlexSkipped, c.FlexErrors, c.CharErrors)
	}
	if sum := c.Add(c); sum.FlexSkipped != 2 {
		t.Fatalf("Add: FlexSkipped = %d, want 2", sum.FlexSkipped)
	}
}

// longSequential is the reason long single-threaded checks give for
// skipping under -short: scripts/test runs the race detector with -short
// (it makes image work about ten times slower and finds nothing in code
// without goroutines), then the whole suite without it.
const longSequential = "long sequential image work: runs in the pass of scripts/test without -short and the race detector"
