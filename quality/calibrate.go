package quality

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
)

// Sample is one ground-truthed page for fitting or evaluating a Model.
type Sample struct {
	ID     string   // page identifier, e.g. its path relative to the OCR folder
	Record Features // features of the page record; FromRecord false when there was only text
	Text   Features // features of the page's plain text
	CER    float64  // measured CER against ground truth; 0 when EmptyTruth

	// EmptyTruth marks a page whose ground truth is empty (a blank page):
	// its CER is undefined, Fit leaves it out and Evaluate only checks
	// that it was decided blank or picture.
	EmptyTruth bool
}

// features returns the features the model uses for s.
func (s *Sample) features() Features {
	if s.Record.FromRecord {
		return s.Record
	}
	return s.Text
}

// FitOptions control Fit. The zero value gives the defaults.
type FitOptions struct {
	Seed    int64     // seed of the cross-validation folds; 0 means 1
	Folds   int       // cross-validation folds for choosing the ridge penalty; 0 means 5
	Lambdas []float64 // candidate penalties on standardised terms; nil means a grid from 0.01 to 100
	Offset  float64   // target is log(CER + Offset); 0 means 0.01
	Source  string    // recorded in FitInfo

	// RecordTerms and TextTerms name the terms (see Model) of the two
	// regressions; nil means the default sets.
	RecordTerms, TextTerms []string

	// Rescan is the declared rescan threshold on measured CER (0 means
	// DefaultRescan) and Recall the declared target recall of pages above
	// it (0 means 0.95). Fit chooses each regression's RescanFactor so
	// that, on out-of-fold predictions for the fitting pages, the recall
	// reaches Recall + RecallMargin (at most 1).
	Rescan, Recall float64
}

// RecallMargin is added to the declared target recall when Fit chooses the
// rescan cut on out-of-fold predictions, so that the target still holds on
// new pages when the cross-validated recall was a little optimistic (our
// own choice, declared before the cut was judged on held-out pages).
const RecallMargin = 0.03

// MinRescanFactor is the lowest RescanFactor Fit will choose: a cut below
// half the threshold would send too many pages that only need correcting
// to the scanner (our own choice).
const MinRescanFactor = 0.5

// ErrTooFewPages is returned by Fit when there are fewer usable pages than
// it needs (MinFitPages with a record, or as plain text).
var ErrTooFewPages = errors.New("quality: too few ground-truthed pages to fit a model")

// MinFitPages is the fewest non-blank pages Fit accepts for each regression.
const MinFitPages = 20

// Fit fits a Model on ground-truthed samples: a ridge regression for page
// records and one for plain text, each with its penalty chosen by k-fold
// cross-validation (folds drawn with the seed, so fitting is reproducible).
// Blank pages and pages without any recognised token are left out: triage
// decides them without the model.
func Fit(samples []Sample, o FitOptions) (*Model, error) {
	if o.Seed == 0 {
		o.Seed = 1
	}
	if o.Folds == 0 {
		o.Folds = 5
	}
	if o.Lambdas == nil {
		o.Lambdas = []float64{0.01, 0.03, 0.1, 0.3, 1, 3, 10, 30, 100}
	}
	if o.Offset == 0 {
		o.Offset = 0.01
	}
	if o.Rescan == 0 {
		o.Rescan = DefaultRescan
	}
	if o.Recall == 0 {
		o.Recall = 0.95
	}
	var recX, txtX []Features
	var recY, txtY, recCER, txtCER []float64
	for i := range samples {
		s := &samples[i]
		if s.EmptyTruth {
			continue
		}
		y := math.Log(math.Min(math.Max(s.CER, 0), 1) + o.Offset)
		if s.Record.FromRecord && !s.Record.Blank && s.Record.Tokens > 0 {
			recX = append(recX, s.Record)
			recY = append(recY, y)
			recCER = append(recCER, s.CER)
		}
		if !s.Text.Blank && s.Text.Tokens > 0 {
			txtX = append(txtX, s.Text)
			txtY = append(txtY, y)
			txtCER = append(txtCER, s.CER)
		}
	}
	if len(recX) < MinFitPages || len(txtX) < MinFitPages {
		return nil, fmt.Errorf("%w: %d with page records, %d as text; need %d of each", ErrTooFewPages, len(recX), len(txtX), MinFitPages)
	}
	m := &Model{Version: ModelVersion, Offset: o.Offset}
	rt, tt := o.RecordTerms, o.TextTerms
	if rt == nil {
		rt = recordTerms
	}
	if tt == nil {
		tt = textTerms
	}
	for _, name := range append(append([]string(nil), rt...), tt...) {
		if termFuncs[name] == nil {
			return nil, fmt.Errorf("quality: unknown model term %q", name)
		}
	}
	goal := math.Min(1, o.Recall+RecallMargin)
	var oof []float64
	m.Record, oof = fitLinear(recX, recY, rt, o)
	m.Record.RescanFactor = rescanFactor(oof, recCER, m.Offset, o.Rescan, goal)
	m.Text, oof = fitLinear(txtX, txtY, tt, o)
	m.Text.RescanFactor = rescanFactor(oof, txtCER, m.Offset, o.Rescan, goal)
	m.Fit = FitInfo{Source: o.Source, Pages: len(recX), TextPages: len(txtX), Seed: o.Seed, TrainSpread: stddev(recY),
		Rescan: o.Rescan, RecallGoal: goal}
	return m, nil
}

// rescanFactor returns the largest factor f in [MinRescanFactor, 1], in
// steps of 0.01, such that flagging pages whose out-of-fold estimate
// smear·exp(oof) − offset exceeds f·rescan catches at least the share goal
// of the pages whose measured CER exceeds rescan (MinRescanFactor when no
// factor does; 1 when no fitting page is above rescan).
func rescanFactor(oof, cer []float64, offset, rescan, goal float64) float64 {
	var bad []float64
	for i, c := range cer {
		if c > rescan {
			bad = append(bad, math.Exp(oof[i])-offset)
		}
	}
	if len(bad) == 0 {
		return 1
	}
	for k := 100; k >= int(100*MinRescanFactor); k-- {
		f := float64(k) / 100
		caught := 0
		for _, p := range bad {
			if p > f*rescan {
				caught++
			}
		}
		if float64(caught) >= goal*float64(len(bad))-1e-9 {
			return f
		}
	}
	return MinRescanFactor
}

// fitLinear standardises the terms and fits a ridge regression, choosing
// the penalty with the lowest cross-validated squared error.
//
// It also returns, for every page, the out-of-fold prediction of log(CER +
// Offset) made with the chosen penalty by a model that did not see the
// page, retransformed with that model's own smearing factor (so that
// exp(oof) − Offset is the estimate PredictCER would have given).
func fitLinear(fs []Features, y []float64, names []string, o FitOptions) (Linear, []float64) {
	n, p := len(fs), len(names)
	X := make([][]float64, n)
	for i := range fs {
		X[i] = make([]float64, p)
		for j, name := range names {
			X[i][j] = termFuncs[name](&fs[i])
		}
	}
	// Folds: a seeded permutation of the pages.
	rng := rand.New(rand.NewPCG(uint64(o.Seed), 0x7472696167650001))
	perm := rng.Perm(n)
	fold := make([]int, n)
	for k, i := range perm {
		fold[i] = k % o.Folds
	}
	best, bestErr := o.Lambdas[0], math.Inf(1)
	for _, lam := range o.Lambdas {
		var sse float64
		for k := 0; k < o.Folds; k++ {
			tx, ty := outOfFold(X, y, fold, k)
			l := ridge(tx, ty, names, lam)
			for i := range X {
				if fold[i] == k {
					d := l.predictRow(X[i]) - y[i]
					sse += d * d
				}
			}
		}
		if sse < bestErr-1e-12 {
			best, bestErr = lam, sse
		}
	}
	oof := make([]float64, n)
	for k := 0; k < o.Folds; k++ {
		tx, ty := outOfFold(X, y, fold, k)
		l := ridge(tx, ty, names, best)
		l.Smear = smearing(l, tx, ty)
		for i := range X {
			if fold[i] == k {
				oof[i] = l.predictRow(X[i]) + math.Log(l.Smear)
			}
		}
	}
	l := ridge(X, y, names, best)
	l.Smear = smearing(l, X, y)
	return l, oof
}

// smearing returns Duan's smearing factor, the mean of exp(residual) over
// the fitting pages: it turns a prediction of log(CER + Offset) into an
// estimate of the mean CER instead of its median (Duan, "Smearing
// estimate: a nonparametric retransformation method", JASA 78, 1983).
func smearing(l Linear, X [][]float64, y []float64) float64 {
	var smear float64
	for i := range X {
		smear += math.Exp(y[i] - l.predictRow(X[i]))
	}
	return smear / float64(len(X))
}

// ridge fits y ≈ a + Σ b_j·(x_j − mean_j)/sd_j minimising squared error plus
// lam·n·Σ b_j² (the intercept is not penalised), by solving the normal
// equations with a Cholesky factorisation.
func ridge(X [][]float64, y []float64, names []string, lam float64) Linear {
	n, p := len(X), len(names)
	mean := make([]float64, p)
	sd := make([]float64, p)
	for _, row := range X {
		for j, v := range row {
			mean[j] += v
		}
	}
	for j := range mean {
		mean[j] /= float64(n)
	}
	for _, row := range X {
		for j, v := range row {
			sd[j] += (v - mean[j]) * (v - mean[j])
		}
	}
	for j := range sd {
		sd[j] = math.Sqrt(sd[j] / float64(n))
		if sd[j] < 1e-9 {
			sd[j] = 1
		}
	}
	ym := 0.0
	for _, v := range y {
		ym += v
	}
	ym /= float64(n)
	A := make([][]float64, p)
	for j := range A {
		A[j] = make([]float64, p)
	}
	b := make([]float64, p)
	z := make([]float64, p)
	for i, row := range X {
		for j, v := range row {
			z[j] = (v - mean[j]) / sd[j]
		}
		for j := 0; j < p; j++ {
			b[j] += z[j] * (y[i] - ym)
			for k := 0; k <= j; k++ {
				A[j][k] += z[j] * z[k]
			}
		}
	}
	for j := 0; j < p; j++ {
		A[j][j] += lam * float64(n)
		for k := 0; k < j; k++ {
			A[k][j] = A[j][k]
		}
	}
	coef := choleskySolve(A, b)
	l := Linear{Intercept: ym, Lambda: lam, Terms: make([]Term, p)}
	for j, name := range names {
		l.Terms[j] = Term{Name: name, Mean: mean[j], Scale: sd[j], Coef: coef[j]}
	}
	return l
}

func (l *Linear) predictRow(x []float64) float64 {
	y := l.Intercept
	for j, t := range l.Terms {
		y += t.Coef * (x[j] - t.Mean) / t.Scale
	}
	return y
}

// choleskySolve solves A x = b for a symmetric positive definite A.
func choleskySolve(A [][]float64, b []float64) []float64 {
	p := len(b)
	L := make([][]float64, p)
	for i := range L {
		L[i] = make([]float64, p)
	}
	for i := 0; i < p; i++ {
		for j := 0; j <= i; j++ {
			s := A[i][j]
			for k := 0; k < j; k++ {
				s -= L[i][k] * L[j][k]
			}
			if i == j {
				L[i][i] = math.Sqrt(math.Max(s, 1e-12))
			} else {
				L[i][j] = s / L[j][j]
			}
		}
	}
	x := make([]float64, p)
	for i := 0; i < p; i++ { // L w = b
		s := b[i]
		for k := 0; k < i; k++ {
			s -= L[i][k] * x[k]
		}
		x[i] = s / L[i][i]
	}
	for i := p - 1; i >= 0; i-- { // Lᵀ x = w
		s := x[i]
		for k := i + 1; k < p; k++ {
			s -= L[k][i] * x[k]
		}
		x[i] = s / L[i][i]
	}
	return x
}

// Split divides samples into a fitting set and a held-out set of round(
// share·n) pages, chosen by a seeded shuffle of the samples sorted by ID,
// so the split depends only on the page IDs, the share and the seed.
func Split(samples []Sample, share float64, seed int64) (fit, held []Sample) {
	s := append([]Sample(nil), samples...)
	sort.Slice(s, func(i, j int) bool { return s[i].ID < s[j].ID })
	rng := rand.New(rand.NewPCG(uint64(seed), 0x686f6c646f757400))
	rng.Shuffle(len(s), func(i, j int) { s[i], s[j] = s[j], s[i] })
	k := int(math.Round(share * float64(len(s))))
	k = max(0, min(k, len(s)))
	held, fit = s[:k], s[k:]
	sort.Slice(held, func(i, j int) bool { return held[i].ID < held[j].ID })
	sort.Slice(fit, func(i, j int) bool { return fit[i].ID < fit[j].ID })
	return fit, held
}

// Evaluation reports how well a model's estimates match measured CER.
type Evaluation struct {
	Pages    int     `json:"pages"`    // pages evaluated (with ground truth)
	Spearman float64 `json:"spearman"` // rank correlation of predicted against measured CER (NaN if undefined)
	MAE      float64 `json:"mae"`      // mean absolute error of predicted CER

	RescanAbove float64 `json:"rescan_above"` // the declared threshold: a page "needs rescan" when measured CER > this
	TruePos     int     `json:"true_pos"`     // decided rescan, measured above the threshold
	FalsePos    int     `json:"false_pos"`    // decided rescan, measured at or below
	FalseNeg    int     `json:"false_neg"`    // not decided rescan (incl. blank/picture), measured above
	Precision   float64 `json:"precision"`    // TruePos / (TruePos + FalsePos); NaN when nothing was flagged
	Recall      float64 `json:"recall"`       // TruePos / (TruePos + FalseNeg); NaN when no page is above

	Clean         int     `json:"clean"`          // pages with measured CER < 0.01
	CleanAccepted float64 `json:"clean_accepted"` // share of those decided accept (NaN when none)

	Decisions map[string]int `json:"decisions"` // pages per decision

	EmptyTruth   int `json:"empty_truth"`    // pages with empty ground truth (not in the figures above)
	EmptyAsBlank int `json:"empty_as_blank"` // of those, decided blank or picture
}

// Evaluate runs Triage on every sample and compares with measured CER.
// Spearman and MAE are computed over pages that are not blank.
func Evaluate(m *Model, samples []Sample, t Thresholds) Evaluation {
	t = t.withDefaults()
	e := Evaluation{RescanAbove: t.Rescan, Decisions: map[string]int{}}
	var pred, meas []float64
	var cleanAcc int
	for i := range samples {
		s := &samples[i]
		f := s.features()
		v := Triage(f, m, t)
		e.Decisions[v.Decision]++
		if s.EmptyTruth {
			e.EmptyTruth++
			if v.Decision == DecisionBlank || v.Decision == DecisionPicture {
				e.EmptyAsBlank++
			}
			continue
		}
		if !f.Blank {
			pred = append(pred, v.PredictedCER)
			meas = append(meas, s.CER)
			e.MAE += math.Abs(v.PredictedCER - s.CER)
		}
		bad := s.CER > t.Rescan
		switch {
		case v.Decision == DecisionRescan && bad:
			e.TruePos++
		case v.Decision == DecisionRescan:
			e.FalsePos++
		case bad:
			e.FalseNeg++
		}
		if s.CER < 0.01 {
			e.Clean++
			if v.Decision == DecisionAccept {
				cleanAcc++
			}
		}
	}
	e.Pages = len(samples) - e.EmptyTruth
	if len(pred) > 0 {
		e.MAE /= float64(len(pred))
	}
	e.Spearman = Spearman(pred, meas)
	e.Precision = ratio(e.TruePos, e.TruePos+e.FalsePos)
	e.Recall = ratio(e.TruePos, e.TruePos+e.FalseNeg)
	e.CleanAccepted = ratio(cleanAcc, e.Clean)
	return e
}

func ratio(a, b int) float64 {
	if b == 0 {
		return math.NaN()
	}
	return float64(a) / float64(b)
}

// Spearman returns Spearman's rank correlation coefficient of x and y: the
// Pearson correlation of their ranks, tied values taking the mean of the
// ranks they span. It returns NaN when the lengths differ, there are fewer
// than two pairs, or either variable is constant.
func Spearman(x, y []float64) float64 {
	if len(x) != len(y) || len(x) < 2 {
		return math.NaN()
	}
	return pearson(ranks(x), ranks(y))
}

// ranks returns the 1-based ranks of v, ties averaged.
func ranks(v []float64) []float64 {
	idx := make([]int, len(v))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return v[idx[a]] < v[idx[b]] })
	r := make([]float64, len(v))
	for i := 0; i < len(idx); {
		j := i
		for j+1 < len(idx) && v[idx[j+1]] == v[idx[i]] {
			j++
		}
		avg := float64(i+j)/2 + 1
		for k := i; k <= j; k++ {
			r[idx[k]] = avg
		}
		i = j + 1
	}
	return r
}

func pearson(x, y []float64) float64 {
	n := float64(len(x))
	var mx, my float64
	for i := range x {
		mx += x[i]
		my += y[i]
	}
	mx /= n
	my /= n
	var sxy, sxx, syy float64
	for i := range x {
		dx, dy := x[i]-mx, y[i]-my
		sxy += dx * dy
		sxx += dx * dx
		syy += dy * dy
	}
	if sxx == 0 || syy == 0 {
		return math.NaN()
	}
	return sxy / math.Sqrt(sxx*syy)
}

func stddev(v []float64) float64 {
	if len(v) == 0 {
		return 0
	}
	var m float64
	for _, x := range v {
		m += x
	}
	m /= float64(len(v))
	var s float64
	for _, x := range v {
		s += (x - m) * (x - m)
	}
	return math.Sqrt(s / float64(len(v)))
}

// Targets are the figures a calibration declares before fitting and checks
// on held-out pages. The zero value means the project's targets.
type Targets struct {
	Spearman    float64 // minimum rank correlation; 0 means 0.9
	Recall      float64 // minimum recall of rescan; 0 means 0.95
	Precision   float64 // minimum precision of rescan; 0 means 0.85
	CleanAccept float64 // minimum share of clean pages (CER < 1 %) accepted; 0 means 0.95
}

func (t Targets) withDefaults() Targets {
	if t.Spearman == 0 {
		t.Spearman = 0.9
	}
	if t.Recall == 0 {
		t.Recall = 0.95
	}
	if t.Precision == 0 {
		t.Precision = 0.85
	}
	if t.CleanAccept == 0 {
		t.CleanAccept = 0.95
	}
	return t
}

// Check compares e with the targets and returns whether all were met and
// one line per target saying whether it was. A figure that is undefined
// (NaN: no page above the threshold, none flagged, no clean page) does not
// meet its target.
func (t Targets) Check(e Evaluation) (met bool, lines []string) {
	t = t.withDefaults()
	met = true
	line := func(name string, got, want float64) {
		ok := got >= want // false for NaN
		met = met && ok
		verdict := "met"
		if !ok {
			verdict = "NOT met"
		}
		lines = append(lines, fmt.Sprintf("%-28s %6.3f  target >= %.2f  %s", name, got, want, verdict))
	}
	line("Spearman rank correlation", e.Spearman, t.Spearman)
	line(fmt.Sprintf("recall of rescan (CER>%.0f%%)", 100*e.RescanAbove), e.Recall, t.Recall)
	line("precision of rescan", e.Precision, t.Precision)
	line("clean pages accepted", e.CleanAccepted, t.CleanAccept)
	return met, lines
}

// outOfFold returns the rows of X and y not in fold k: the training rows
// when fold k is held out.
func outOfFold(X [][]float64, y []float64, fold []int, k int) ([][]float64, []float64) {
	var tx [][]float64
	var ty []float64
	for i := range X {
		if fold[i] != k {
			tx = append(tx, X[i])
			ty = append(ty, y[i])
		}
	}
	return tx, ty
}
