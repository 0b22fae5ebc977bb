package quality

import (
	"cmp"
	"slices"
	"strings"
)

// Confusion is one group of adjacent edits in an alignment: the reference
// text Ref that the hypothesis read as Hyp. Ref is empty for a pure
// insertion and Hyp for a pure deletion. A run of edits with no match in
// between forms one group, so "m" read as "rn" is one Confusion{"m", "rn"}
// rather than a substitution and an insertion.
type Confusion struct {
	Ref string
	Hyp string
}

// String shows the confusion as "e→c", "∅→." or "m→rn"; an empty side is
// "∅" and a space is shown as "␣" so that it stays visible.
func (c Confusion) String() string {
	return showSide(c.Ref) + "→" + showSide(c.Hyp)
}

func showSide(s string) string {
	if s == "" {
		return "∅"
	}
	return strings.ReplaceAll(s, " ", "␣")
}

// Group returns the confusions of an alignment in order: each maximal run
// of non-match ops becomes one Confusion. It runs in O(len(ops)) time.
func Group(ops []Op) []Confusion {
	var out []Confusion
	var ref, hyp []rune
	flush := func() {
		if len(ref) > 0 || len(hyp) > 0 {
			out = append(out, Confusion{string(ref), string(hyp)})
		}
		ref, hyp = ref[:0], hyp[:0]
	}
	for _, op := range ops {
		switch op.Kind {
		case OpMatch:
			flush()
		case OpSub:
			ref, hyp = append(ref, op.R), append(hyp, op.H)
		case OpDel:
			ref = append(ref, op.R)
		case OpIns:
			hyp = append(hyp, op.H)
		}
	}
	flush()
	return out
}

// ConfusionCount is a confusion and how often it occurred.
type ConfusionCount struct {
	Confusion
	Count int
}

// TopConfusions returns the n most frequent confusions in counts, most
// frequent first; ties are broken by Ref, then Hyp, so the order never
// depends on map iteration. n <= 0 means all.
func TopConfusions(counts map[Confusion]int, n int) []ConfusionCount {
	out := make([]ConfusionCount, 0, len(counts))
	for c, k := range counts {
		out = append(out, ConfusionCount{c, k})
	}
	slices.SortFunc(out, func(x, y ConfusionCount) int {
		return cmp.Or(cmp.Compare(y.Count, x.Count), cmp.Compare(x.Ref, y.Ref), cmp.Compare(x.Hyp, y.Hyp))
	})
	if n > 0 && len(out) > n {
		out = out[:n]
	}
	return out
}
