package quality

import (
	"cmp"
	"encoding/csv"
	"errors"
	"fmt"
	"hash/fnv"
	"io"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
)

// A sampling plan: how many pages of each title to transcribe so that the
// title's CER is known to ±HalfWidth at 95 %, and which pages.
//
// The sampling unit is the page (errors cluster within pages), drawn
// without replacement, stratified by the predicted CER of triage (bands
// SampleBands), with proportional allocation. The size follows the
// textbook rule for a mean under stratified random sampling with
// proportional allocation (W. G. Cochran, Sampling Techniques, 3rd ed.,
// Wiley 1977, sections 4.4 and 5.5, from memory):
//
//	n0 = z² · Σ_h W_h S_h² / d²,   n = n0 / (1 + n0/N)
//
// with z = 1.96, d the half-width, W_h = N_h/N the share of the title's
// pages in band h and S_h² the variance of page CER within band h. The
// page CERs are not known before transcription: S_h² is the variance of
// the predicted CERs in the band plus the prediction error
// (PlanOptions.PredictionError, relative to each page's prediction). So
// that the interval reaches the target width in most samples, not only
// on average, n is raised for the variability of the sample variance
// (Cochran 1977, section 4.7, from memory: var(s²) ≈ S⁴(κ−1)/n with κ the
// kurtosis), to reach the target with probability PlanOptions.Assurance.
// Every band gets at least MinBandPages pages (bands with fewer pages are
// merged with a neighbour), so that its spread can be estimated.
//
// After transcription the title's CER is the combined ratio estimate
// Σ W_h ē_h / Σ W_h c̄_h (errors and characters per sampled page), and its
// 95 % interval the stratified percentile bootstrap (resampling pages
// within each band; Efron and Tibshirani, An Introduction to the
// Bootstrap, 1993, chapter 13, from memory): StratifiedInterval.

// MinBandPages is the smallest sample of a band: bands with fewer pages
// are merged with their neighbour, and every band gets at least this many
// pages (all of its pages when it has fewer), more than proportional
// allocation gives the rare bad bands; the estimate weights each band by
// its share of the title, so this costs no bias.
const MinBandPages = 8

// SampleBands are the upper edges of the predicted-CER bands; the last
// band runs to 1.
var SampleBands = []float64{0.02, 0.05, 0.10, 0.20}

// PageEstimate is one page of a recognised collection with triage's
// predicted CER.
type PageEstimate struct {
	Title, Page  string
	PredictedCER float64
}

// PlanOptions configure PlanSample.
type PlanOptions struct {
	HalfWidth       float64   // target half-width of the 95 % interval, as a fraction (0.01 is ±1 point)
	Seed            uint64    // seed of the draw; 0 means DefaultSeed
	Bands           []float64 // upper band edges; nil means SampleBands
	PredictionError float64   // standard deviation of the true page CER around the prediction, relative to it; <0 means none, 0 means 0.5
	Assurance       float64   // probability of reaching the half-width; 0 means 0.9
	MinPages        int       // smallest sample per title (all pages when fewer); 0 means 5
}

func (o PlanOptions) withDefaults() PlanOptions {
	if o.Seed == 0 {
		o.Seed = DefaultSeed
	}
	if o.Bands == nil {
		o.Bands = SampleBands
	}
	if o.PredictionError == 0 {
		o.PredictionError = 0.5
	}
	o.PredictionError = max(o.PredictionError, 0)
	if o.Assurance == 0 {
		o.Assurance = 0.9
	}
	if o.MinPages == 0 {
		o.MinPages = 5
	}
	return o
}

// Stratum is one predicted-CER band of a title.
type Stratum struct {
	Low, High float64 // predicted CER in [Low, High)
	Pages     int     // pages of the title in the band (N_h)
	Sampled   int     // pages drawn (n_h)
}

// TitlePlan is the plan for one title.
type TitlePlan struct {
	Title   string
	Pages   int     // N
	SD      float64 // planning standard deviation of page CER within bands, sqrt(Σ W_h S_h²)
	N0      float64 // size before the assurance and finite-population corrections
	Planned int     // pages to transcribe (Σ n_h)
	Strata  []Stratum
}

// SampledPage is a page to transcribe.
type SampledPage struct {
	Title, Page  string
	PredictedCER float64
	Stratum      int // index into the title's Strata
}

// SamplePlan is a sampling plan for a collection.
type SamplePlan struct {
	HalfWidth float64
	Seed      uint64
	Titles    []TitlePlan   // sorted by title
	Pages     []SampledPage // sorted by title, then page
}

// z95 is the 97.5 % point of the standard normal distribution.
const z95 = 1.959964

// PlanSample computes the sample size of every title and draws its pages.
func PlanSample(pages []PageEstimate, o PlanOptions) (*SamplePlan, error) {
	if !(o.HalfWidth > 0 && o.HalfWidth < 1) {
		return nil, fmt.Errorf("quality: sample half-width %g: must lie between 0 and 1 (0.01 is ±1 point)", o.HalfWidth)
	}
	o = o.withDefaults()
	byTitle := map[string][]PageEstimate{}
	for _, p := range pages {
		if p.PredictedCER != p.PredictedCER || p.PredictedCER < 0 {
			return nil, fmt.Errorf("quality: page %q: predicted CER %g", p.Page, p.PredictedCER)
		}
		byTitle[p.Title] = append(byTitle[p.Title], p)
	}
	plan := &SamplePlan{HalfWidth: o.HalfWidth, Seed: o.Seed}
	names := make([]string, 0, len(byTitle))
	for t := range byTitle {
		names = append(names, t)
	}
	slices.Sort(names)
	for _, t := range names {
		ps := byTitle[t]
		slices.SortFunc(ps, func(a, b PageEstimate) int { return cmp.Compare(a.Page, b.Page) })
		tp, drawn := planTitle(t, ps, o)
		plan.Titles = append(plan.Titles, tp)
		plan.Pages = append(plan.Pages, drawn...)
	}
	return plan, nil
}

func bandOf(p float64, edges []float64) int {
	for i, e := range edges {
		if p < e {
			return i
		}
	}
	return len(edges)
}

// planTitle sizes and draws one title's sample (pages sorted by Page).
func planTitle(title string, ps []PageEstimate, o PlanOptions) (TitlePlan, []SampledPage) {
	N := len(ps)
	nb := len(o.Bands) + 1
	members := make([][]int, nb)
	for i, p := range ps {
		b := bandOf(p.PredictedCER, o.Bands)
		members[b] = append(members[b], i)
	}
	// A band with fewer than MinBandPages pages is merged into the band
	// below it (the lowest into the one above), so that every band's
	// spread can be estimated from its sample.
	lows := make([]float64, nb)
	highs := make([]float64, nb)
	for h := range nb {
		if h > 0 {
			lows[h] = o.Bands[h-1]
		}
		highs[h] = 1
		if h < len(o.Bands) {
			highs[h] = o.Bands[h]
		}
	}
	for h := nb - 1; h >= 0 && len(members) > 1; h-- {
		if h >= len(members) || len(members[h]) >= MinBandPages {
			continue
		}
		into := h - 1
		if h == 0 {
			into = 1
		}
		members[into] = append(members[into], members[h]...)
		lows[into], highs[into] = min(lows[into], lows[h]), max(highs[into], highs[h])
		members = slices.Delete(members, h, h+1)
		lows = slices.Delete(lows, h, h+1)
		highs = slices.Delete(highs, h, h+1)
	}
	nb = len(members)

	// Σ W_h S_h² and the pooled fourth moment, for the kurtosis.
	var sw, m4 float64
	for _, idx := range members {
		if len(idx) == 0 {
			continue
		}
		var mean float64
		for _, i := range idx {
			mean += ps[i].PredictedCER
		}
		mean /= float64(len(idx))
		for _, i := range idx {
			p := ps[i].PredictedCER
			e := o.PredictionError * p // prediction error of this page
			d := p - mean
			sw += (d*d + e*e) / float64(N)
			// Fourth moment of a deviation d plus a normal error of sd e.
			m4 += (d*d*d*d + 6*d*d*e*e + 3*e*e*e*e) / float64(N)
		}
	}
	kurt := 3.0
	if sw > 0 {
		kurt = min(max(m4/(sw*sw), 1), 30)
	}
	n0 := z95 * z95 * sw / (o.HalfWidth * o.HalfWidth)
	// Assurance: s² ≈ S²(1 + sqrt((κ−1)/n)·Z); reach d when Z ≤ z_β.
	zb := normalQuantile(o.Assurance)
	n := n0
	for range 50 {
		if n < 1 {
			break
		}
		next := n0 * (1 + zb*math.Sqrt((kurt-1)/n))
		if math.Abs(next-n) < 1e-6 {
			break
		}
		n = next
	}
	n = n / (1 + n/float64(N)) // finite population correction
	want := int(math.Ceil(n - 1e-9))
	want = min(max(want, o.MinPages), N)

	// Proportional allocation, largest remainders, at least MinBandPages
	// pages per band (all of a smaller band).
	alloc := make([]int, nb)
	rem := make([]float64, nb)
	total := 0
	for h, idx := range members {
		exact := float64(want) * float64(len(idx)) / float64(N)
		alloc[h] = int(exact)
		rem[h] = exact - float64(alloc[h])
		if floor := min(MinBandPages, len(idx)); alloc[h] < floor {
			alloc[h], rem[h] = floor, 0
		}
		total += alloc[h]
	}
	for total < want {
		best := -1
		for h := range alloc {
			if alloc[h] < len(members[h]) && (best < 0 || rem[h] > rem[best]) {
				best = h
			}
		}
		if best < 0 {
			break
		}
		alloc[best]++
		rem[best] = -1
		total++
	}

	tp := TitlePlan{Title: title, Pages: N, SD: math.Sqrt(sw), N0: n0}
	var drawn []SampledPage
	rng := rand.New(rand.NewPCG(o.Seed, titleHash(title)))
	for h, idx := range members {
		tp.Strata = append(tp.Strata, Stratum{Low: lows[h], High: highs[h], Pages: len(idx), Sampled: alloc[h]})
		tp.Planned += alloc[h]
		perm := slices.Clone(idx)
		rng.Shuffle(len(perm), func(i, j int) { perm[i], perm[j] = perm[j], perm[i] })
		for _, i := range perm[:alloc[h]] {
			drawn = append(drawn, SampledPage{Title: title, Page: ps[i].Page, PredictedCER: ps[i].PredictedCER, Stratum: h})
		}
	}
	slices.SortFunc(drawn, func(a, b SampledPage) int { return cmp.Compare(a.Page, b.Page) })
	return tp, drawn
}

func titleHash(s string) uint64 {
	h := fnv.New64a()
	h.Write([]byte(s))
	return h.Sum64()
}

// normalQuantile is the inverse standard normal distribution function
// (bisection on math.Erf; plenty for planning).
func normalQuantile(p float64) float64 {
	lo, hi := -10.0, 10.0
	for range 100 {
		mid := (lo + hi) / 2
		if 0.5*(1+math.Erf(mid/math.Sqrt2)) < p {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// StratumCounts are the scored sampled pages of one band, with the band's
// size in the title.
type StratumCounts struct {
	Pages  int      // N_h
	Scored []Counts // the sampled pages' counts
}

// StratifiedInterval returns the combined ratio estimate of the title's
// CER, Σ N_h ē_h / Σ N_h c̄_h, and its 95 % stratified percentile bootstrap
// interval: pages resampled with replacement within each band, each
// band's resampled means rescaled about the sample means by
// sqrt(n_h(1 − f_h)/(n_h − 1)), f_h = n_h/N_h, so that the bootstrap
// variance is the textbook variance of stratified sampling without
// replacement (the rescaling bootstrap of Rao and Wu, Journal of the
// American Statistical Association 83, 1988, from memory). A band with one
// sampled page adds no spread. ok is false when a band with pages has none
// scored or no character was scored.
func StratifiedInterval(strata []StratumCounts, resamples int, seed uint64) (est, low, high float64, ok bool) {
	if resamples <= 0 {
		resamples = DefaultResamples
	}
	if seed == 0 {
		seed = DefaultSeed
	}
	type band struct {
		N, n, k  float64
		me, mc   float64 // sample means of errors and characters
		err, chr []float64
	}
	var bands []band
	var e, c float64
	for _, s := range strata {
		if s.Pages == 0 {
			continue
		}
		if len(s.Scored) == 0 {
			return 0, 0, 0, false
		}
		b := band{N: float64(s.Pages), n: float64(len(s.Scored))}
		for _, p := range s.Scored {
			b.err = append(b.err, float64(p.CharErrors))
			b.chr = append(b.chr, float64(p.Chars))
			b.me += float64(p.CharErrors)
			b.mc += float64(p.Chars)
		}
		b.me /= b.n
		b.mc /= b.n
		if b.n > 1 {
			b.k = math.Sqrt(b.n * max(0, 1-b.n/b.N) / (b.n - 1))
		}
		e += b.N * b.me
		c += b.N * b.mc
		bands = append(bands, b)
	}
	if c == 0 {
		return 0, 0, 0, false
	}
	est = e / c
	rng := rand.New(rand.NewPCG(seed, 0x5a17))
	rates := make([]float64, 0, resamples)
	for range resamples {
		var re, rc float64
		for _, b := range bands {
			var se, sc float64
			for range len(b.err) {
				i := rng.IntN(len(b.err))
				se += b.err[i]
				sc += b.chr[i]
			}
			re += b.N * (b.me + b.k*(se/b.n-b.me))
			rc += b.N * (b.mc + b.k*(sc/b.n-b.mc))
		}
		if rc > 0 {
			rates = append(rates, re/rc)
		}
	}
	if len(rates) == 0 {
		return est, 0, 0, false
	}
	slices.Sort(rates)
	return est, nearestRank(rates, 25), nearestRank(rates, 975), true
}

// Plan files: one CSV row per page to transcribe.
var planHeader = []string{"title", "page", "predicted_cer", "stratum", "stratum_low", "stratum_high", "stratum_pages", "stratum_sampled", "title_pages", "half_width", "seed"}

// WritePlan writes the plan's pages as CSV (planHeader).
func WritePlan(w io.Writer, plan *SamplePlan) error {
	cw := csv.NewWriter(w)
	cw.Write(planHeader)
	byTitle := map[string]TitlePlan{}
	for _, t := range plan.Titles {
		byTitle[t.Title] = t
	}
	f := func(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }
	for _, p := range plan.Pages {
		t := byTitle[p.Title]
		s := t.Strata[p.Stratum]
		cw.Write([]string{p.Title, p.Page, strconv.FormatFloat(p.PredictedCER, 'f', 4, 64), strconv.Itoa(p.Stratum), f(s.Low), f(s.High),
			strconv.Itoa(s.Pages), strconv.Itoa(s.Sampled), strconv.Itoa(t.Pages), f(plan.HalfWidth), strconv.FormatUint(plan.Seed, 10)})
	}
	cw.Flush()
	return cw.Error()
}

// ReadPlan reads a plan written by WritePlan; errors name the file and
// the line.
func ReadPlan(r io.Reader, name string) (*SamplePlan, error) {
	cr := csv.NewReader(r)
	rows, err := cr.ReadAll()
	if err != nil {
		return nil, fmt.Errorf("quality: sampling plan %q: %w", name, err)
	}
	if len(rows) == 0 || strings.Join(rows[0], ",") != strings.Join(planHeader, ",") {
		return nil, fmt.Errorf("quality: sampling plan %q: the first line must be %s (a file written by recto sample)", name, strings.Join(planHeader, ","))
	}
	plan := &SamplePlan{}
	titles := map[string]*TitlePlan{}
	var order []string
	for i, row := range rows[1:] {
		bad := func(what string) error {
			return fmt.Errorf("quality: sampling plan %q line %d: %s", name, i+2, what)
		}
		num := func(j int) (float64, error) {
			v, err := strconv.ParseFloat(row[j], 64)
			if err != nil || v != v {
				return 0, bad(fmt.Sprintf("%s %q is not a number", planHeader[j], row[j]))
			}
			return v, nil
		}
		var v [11]float64
		for j := 2; j < len(planHeader); j++ {
			if v[j], err = num(j); err != nil {
				return nil, err
			}
		}
		h, Nh, nh, N := int(v[3]), int(v[6]), int(v[7]), int(v[8])
		if h < 0 || h > 100 || Nh < 1 || nh < 1 || nh > Nh || N < Nh {
			return nil, bad("stratum counts do not fit")
		}
		plan.HalfWidth, plan.Seed = v[9], uint64(v[10])
		t := titles[row[0]]
		if t == nil {
			t = &TitlePlan{Title: row[0], Pages: N}
			titles[row[0]] = t
			order = append(order, row[0])
		}
		for len(t.Strata) <= h {
			t.Strata = append(t.Strata, Stratum{})
		}
		if s := t.Strata[h]; s.Pages == 0 {
			t.Strata[h] = Stratum{Low: v[4], High: v[5], Pages: Nh, Sampled: nh}
			t.Planned += nh
		}
		plan.Pages = append(plan.Pages, SampledPage{Title: row[0], Page: row[1], PredictedCER: v[2], Stratum: h})
	}
	if len(plan.Pages) == 0 {
		return nil, fmt.Errorf("quality: sampling plan %q: no pages", name)
	}
	for _, n := range order {
		plan.Titles = append(plan.Titles, *titles[n])
	}
	return plan, nil
}

// TargetResult says whether a title's interval reached the plan's target.
type TargetResult struct {
	Title     string
	Planned   int     // pages in the plan
	Scored    int     // planned pages found among the scored pages
	CER       float64 // combined ratio estimate
	Low, High float64 // 95 % stratified bootstrap interval
	OK        bool    // the interval could be computed
	Reached   bool    // (High − Low)/2 ≤ the plan's half-width
}

// ErrPlanPages is wrapped when no planned page was scored.
var ErrPlanPages = errors.New("none of the planned pages was scored")

// CheckPlan computes, for each title of the plan, the stratified interval
// from the scored pages (matched by page key) and whether it reached the
// plan's half-width.
func CheckPlan(plan *SamplePlan, pages []PageScore, resamples int, seed uint64) ([]TargetResult, error) {
	scored := map[string]Counts{}
	for _, p := range pages {
		scored[p.Page] = p.Counts
	}
	byTitle := map[string][]SampledPage{}
	for _, p := range plan.Pages {
		byTitle[p.Title] = append(byTitle[p.Title], p)
	}
	var out []TargetResult
	any := false
	for _, t := range plan.Titles {
		strata := make([]StratumCounts, len(t.Strata))
		for h, s := range t.Strata {
			strata[h].Pages = s.Pages
		}
		r := TargetResult{Title: t.Title, Planned: t.Planned}
		for _, p := range byTitle[t.Title] {
			if c, ok := scored[p.Page]; ok {
				strata[p.Stratum].Scored = append(strata[p.Stratum].Scored, c)
				r.Scored++
			}
		}
		any = any || r.Scored > 0
		r.CER, r.Low, r.High, r.OK = StratifiedInterval(strata, resamples, seed)
		r.Reached = r.OK && (r.High-r.Low)/2 <= plan.HalfWidth+1e-12
		out = append(out, r)
	}
	if !any {
		return out, ErrPlanPages
	}
	return out, nil
}

// ReadEstimates reads the pages and predicted CERs of a recognised
// collection from a CSV file with a header naming the columns title, page
// and predicted_cer (the CSV of `recto triage --format csv` and a run's
// report/pages.csv both have them). Pages without a prediction (failed)
// and pages decided blank or picture (decision column, when there is one:
// no text to transcribe) are left out and counted in skipped. Errors name
// the file and the line.
func ReadEstimates(r io.Reader, name string) (pages []PageEstimate, skipped int, err error) {
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = -1
	head, err := cr.Read()
	if err != nil {
		return nil, 0, fmt.Errorf("quality: estimates %q: %w", name, err)
	}
	col := map[string]int{}
	for i, h := range head {
		col[strings.TrimPrefix(h, "\uFEFF")] = i
	}
	for _, need := range []string{"title", "page", "predicted_cer"} {
		if _, ok := col[need]; !ok {
			return nil, 0, fmt.Errorf("quality: estimates %q: no %s column in the first line (want the CSV of recto triage --format csv or a run's report/pages.csv)", name, need)
		}
	}
	dec, hasDec := col["decision"]
	for line := 2; ; line++ {
		row, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, 0, fmt.Errorf("quality: estimates %q: %w", name, err)
		}
		get := func(c string) string {
			if i := col[c]; i < len(row) {
				return row[i]
			}
			return ""
		}
		if hasDec && dec < len(row) && (row[dec] == "blank" || row[dec] == "picture") || get("predicted_cer") == "" {
			skipped++
			continue
		}
		v, err := strconv.ParseFloat(get("predicted_cer"), 64)
		if err != nil || v != v || v < 0 {
			return nil, 0, fmt.Errorf("quality: estimates %q line %d: predicted_cer %q is not a rate", name, line, get("predicted_cer"))
		}
		pages = append(pages, PageEstimate{Title: get("title"), Page: get("page"), PredictedCER: min(v, 1)})
	}
	if len(pages) == 0 {
		return nil, skipped, fmt.Errorf("quality: estimates %q: no page with a predicted CER", name)
	}
	return pages, skipped, nil
}
