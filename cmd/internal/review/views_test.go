package review

import (
	"strings"
	"testing"

	"recto/cmd/internal/run/ledger"
)

func TestChooseFiltersAndSorts(t *testing.T) {
	row := func(rel, title, dec string, pred float64, errs int) ledger.Page {
		p := ledger.Page{Rel: rel, Title: title, Decision: dec, PredictedCER: pred, State: ledger.StateDone}
		if errs >= 0 {
			p.HasTruth, p.RefChars, p.CharErrsAf = true, 100, errs
		}
		return p
	}
	rows := []ledger.Page{
		row("a/1", "a", "accept", 0.01, 1), row("a/2", "a", "rescan", 0.30, -1),
		row("b/1", "b", "correct", 0.05, 9), row("b/2", "b", "rescan", 0.20, 20),
		{Rel: "b/3", Title: "b", State: ledger.StateFailed},
	}
	revs := map[string]ledger.Review{"a/1": {Decision: "rescan"}, "b/2": {Decision: "accept"}}
	all := items(rows, revs)
	for _, c := range []struct {
		f    filter
		keep string
		walk bool
		want string
	}{
		{filter{Sort: "name"}, "", false, "a/1 a/2 b/1 b/2 b/3"},
		{filter{Decision: "rescan", Sort: "name"}, "", false, "a/1 a/2"}, // reviewed decisions count
		{filter{Decision: "rescan", Sort: "name"}, "b/1", false, "a/1 a/2 b/1"},
		{filter{Decision: "rescan", Sort: "name"}, "", true, "a/1 a/2 b/2"}, // the walk keeps triage's too
		{filter{Decision: "failed", Sort: "name"}, "", false, "b/3"},
		{filter{Decision: "reviewed", Sort: "name"}, "", false, "a/1 b/2"},
		{filter{Title: "b", Decision: "unreviewed", Sort: "name"}, "", false, "b/1 b/3"},
		{filter{Sort: "predicted"}, "", false, "a/2 b/2 b/1 a/1 b/3"},
		{filter{Sort: "predicted-asc"}, "", false, "a/1 b/1 b/2 a/2 b/3"}, // failed last
		{filter{Sort: "measured"}, "", false, "b/2 b/1 a/1 a/2 b/3"},      // no ground truth last
		{filter{Sort: "measured-asc"}, "", false, "a/1 b/1 b/2 a/2 b/3"},  // no ground truth last
	} {
		var got []string
		for _, it := range choose(all, c.f, c.keep, c.walk) {
			got = append(got, it.Row.Rel)
		}
		if g := strings.Join(got, " "); g != c.want {
			t.Errorf("%+v keep %q walk %v: %s, want %s", c.f, c.keep, c.walk, g, c.want)
		}
	}
	ts, total := titles(all)
	if len(ts) != 2 || total.Pages != 5 || total.Failed != 1 || total.Rev != 2 || total.CER != "10.0 %" {
		t.Errorf("titles %+v total %+v; want pooled CER (1+9+20)/300 = 10.0 %%", ts, total)
	}
}
