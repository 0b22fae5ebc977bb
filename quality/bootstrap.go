package quality

import (
	"math/rand/v2"
	"slices"
)

// Bootstrap defaults. The interval is a percentile bootstrap (Efron and
// Tibshirani 1993, "An Introduction to the Bootstrap", ch. 13) over pages.
const (
	DefaultResamples = 2000 // resamples per title
	DefaultSeed      = 1    // PCG seed, fixed so that runs repeat
)

// MeanCER returns the mean of the page CERs (a macro-average) over the
// pages whose reference is not empty, and false when there is none.
func MeanCER(pages []Counts) (float64, bool) {
	sum, n := 0.0, 0
	for _, p := range pages {
		if c, ok := p.CER(); ok {
			sum += c
			n++
		}
	}
	if n == 0 {
		return 0, false
	}
	return sum / float64(n), true
}

// BootstrapCER returns a 95% percentile-bootstrap interval for the
// micro-averaged CER of a title from its page sample: it draws len(pages)
// pages with replacement, resamples times (0 means DefaultResamples), from
// a PCG generator seeded with seed (0 means DefaultSeed), computes each
// draw's sum of character errors over its sum of reference characters, and
// returns the 2.5th and 97.5th percentiles of those rates by the
// nearest-rank method (the values at ranks ⌈0.025·B⌉ and ⌈0.975·B⌉ of the B
// sorted rates). Draws whose pages all have empty references have no rate
// and are left out. It reports false when no draw has a rate. The interval
// reflects the sampling of pages only, not of characters within a page;
// with one page it collapses to that page's CER.
//
// Complexity: O(B·P + B·log B) time for B resamples of P pages; O(B) memory.
func BootstrapCER(pages []Counts, resamples int, seed uint64) (low, high float64, ok bool) {
	if resamples <= 0 {
		resamples = DefaultResamples
	}
	if seed == 0 {
		seed = DefaultSeed
	}
	if len(pages) == 0 {
		return 0, 0, false
	}
	rng := rand.New(rand.NewPCG(seed, 0x9e3779b97f4a7c15))
	rates := make([]float64, 0, resamples)
	for range resamples {
		chars, errs := 0, 0
		for range pages {
			p := pages[rng.IntN(len(pages))]
			chars += p.Chars
			errs += p.CharErrors
		}
		if chars > 0 {
			rates = append(rates, float64(errs)/float64(chars))
		}
	}
	if len(rates) == 0 {
		return 0, 0, false
	}
	slices.Sort(rates)
	return nearestRank(rates, 25), nearestRank(rates, 975), true
}

// nearestRank returns the quantile permille/1000 of sorted by the
// nearest-rank method: the value at rank ⌈permille·B/1000⌉ (from 1), in
// integer arithmetic so that no rounding moves the rank.
func nearestRank(sorted []float64, permille int) float64 {
	r := (permille*len(sorted) + 999) / 1000
	return sorted[min(max(r, 1), len(sorted))-1]
}
