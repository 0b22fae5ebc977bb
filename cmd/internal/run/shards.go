package run

import (
	"context"
	"fmt"
	"sort"
	"strings"

	"recto/cmd/internal/cli"
	"recto/cmd/internal/run/ledger"
	"recto/cmd/internal/run/shard"
)

// metaPartial is the ledger meta key that holds why a merged ledger is
// partial ("" when it is not); `recto report` repeats it.
const metaPartial = "partial"

// checkShards reads the shard, settings, collection and ground-truth meta
// of every source ledger and returns what keeps them from being one whole
// run: a shard missing, a shard held twice, shards of different counts, or
// ledgers of different settings, collections or ground truth.
func checkShards(ctx context.Context, srcs []shardSource, dstLedger string) ([]string, error) {
	type info struct{ path, shard, settings, collection, truth string }
	var infos []info
	for _, s := range srcs {
		if s.ledger == dstLedger {
			continue
		}
		l, err := ledger.OpenReadOnly(s.ledger)
		if err != nil {
			return nil, fmt.Errorf("merge: %w", err)
		}
		in := info{path: s.ledger}
		for _, kv := range []struct {
			k string
			v *string
		}{{"shard", &in.shard}, {"settings", &in.settings}, {"collection", &in.collection}, {"truth", &in.truth}} {
			if *kv.v, err = l.Meta(ctx, kv.k); err != nil {
				l.Close()
				return nil, fmt.Errorf("merge: %w", err)
			}
		}
		l.Close()
		infos = append(infos, in)
	}
	var problems []string
	byCount := map[int]map[int][]string{} // count -> index -> ledgers
	whole := 0
	for _, in := range infos {
		if in.shard == "" {
			whole++
			continue
		}
		sh, err := shard.Parse(in.shard)
		if err != nil {
			problems = append(problems, fmt.Sprintf("%s: shard %q in its ledger is not i/n", in.path, in.shard))
			continue
		}
		if byCount[sh.Count] == nil {
			byCount[sh.Count] = map[int][]string{}
		}
		byCount[sh.Count][sh.Index] = append(byCount[sh.Count][sh.Index], in.path)
	}
	if len(byCount) > 1 {
		var counts []string
		for n := range byCount {
			counts = append(counts, fmt.Sprintf("of %d", n))
		}
		sort.Strings(counts)
		problems = append(problems, "shards of different counts ("+strings.Join(counts, ", ")+"): they split the pages differently")
	}
	for n, idx := range byCount {
		var missing []string
		for i := range n {
			switch len(idx[i]) {
			case 0:
				missing = append(missing, fmt.Sprintf("%d/%d", i, n))
			case 1:
			default:
				problems = append(problems, fmt.Sprintf("shard %d/%d is held twice (%s)", i, n, strings.Join(idx[i], ", ")))
			}
		}
		if len(missing) > 0 {
			problems = append(problems, fmt.Sprintf("shard %s missing (run them with --shard i/n into the same --out, or name their folders too)", strings.Join(missing, ", ")))
		}
	}
	if whole > 0 && len(byCount) > 0 {
		problems = append(problems, fmt.Sprintf("%d whole-collection ledgers mixed with shards", whole))
	}
	for _, f := range []struct {
		what string
		get  func(info) string
	}{{"settings", func(i info) string { return i.settings }}, {"collections", func(i info) string { return i.collection }},
		{"ground truth folders", func(i info) string { return i.truth }}} {
		seen := map[string]string{}
		for _, in := range infos {
			seen[f.get(in)] = in.path
		}
		if len(seen) > 1 {
			var where []string
			for _, p := range seen {
				where = append(where, p)
			}
			sort.Strings(where)
			problems = append(problems, fmt.Sprintf("the ledgers were written with different %s (%s)", f.what, strings.Join(where, " vs ")))
		}
	}
	sort.Strings(problems)
	return problems, nil
}

// shardsError is a merge refused because its shards do not make one whole
// run: exit status 3, with what is missing.
type shardsError struct{ problems []string }

func (e *shardsError) Error() string {
	return "merge: not one whole run: " + strings.Join(e.problems, "; ") + "; nothing was merged (pass --allow-partial to merge anyway; the report then says it is partial)"
}

func (e *shardsError) Unwrap() error {
	return &cli.PartialError{Failed: len(e.problems), Total: len(e.problems), What: "shard checks"}
}
