package correct

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"recto/correct/correcttest"
)

// TestMergeModels: two models trained on the halves of a text with planted
// confusions merge into one whose one-character estimates equal those of
// the model trained on the whole text (single characters are counted by
// every model, so these merge exactly), whose longer ones are close, and
// whose mark counts are the sums.
func TestMergeModels(t *testing.T) {
	text := readTestdata(t, "moby-ch1-5.txt")
	planted := []correcttest.Confusion{{From: "m", To: "rn"}, {From: "e", To: "c"}, {From: "o", To: "0"}, {From: "l", To: "1"}}
	rng := rand.New(rand.NewPCG(3, 5))
	var all, first, second []Pair
	paras := strings.Split(text, "\n")
	for i, para := range paras {
		if strings.TrimSpace(para) == "" {
			continue
		}
		p := Pair{Ref: para, Hyp: correcttest.Plant(para, 0.1, planted, rng)}
		all = append(all, p)
		if i < len(paras)/2 {
			first = append(first, p)
		} else {
			second = append(second, p)
		}
	}
	whole := Train(all, TrainOptions{MinCount: 1})
	merged := MergeModels(Train(first, TrainOptions{MinCount: 1}), Train(second, TrainOptions{MinCount: 1}))
	if merged.Chars() != whole.Chars() || merged.Pairs() != whole.Pairs() {
		t.Errorf("merged: %d chars, %d pairs; whole: %d, %d", merged.Chars(), merged.Pairs(), whole.Chars(), whole.Pairs())
	}
	for _, c := range []struct{ from, to string }{{"e", "c"}, {"o", "0"}, {"l", "1"}} {
		if a, b := merged.Prob(c.from, c.to), whole.Prob(c.from, c.to); math.Abs(a-b) > 1e-12 {
			t.Errorf("P(%q→%q): merged %.6g, whole text %.6g", c.from, c.to, a, b)
		}
	}
	if a, b := merged.Prob("m", "rn"), whole.Prob("m", "rn"); math.Abs(a-b) > 0.1*b {
		t.Errorf("P(m→rn): merged %.4g, whole text %.4g", a, b)
	}
	for k, v := range whole.marks {
		if merged.marks[k] != v {
			t.Errorf("mark %q: merged %+v, whole %+v", k, merged.marks[k], v)
		}
	}
}
