package quality

import (
	"math"
	"math/rand/v2"
	"reflect"
	"testing"
)

// The worked example of the Wikipedia article "Spearman's rank correlation
// coefficient" (section "Example"; data recalled from memory): IQ against
// hours of television per week for ten people, Σd² = 194, ρ = −29/165 ≈ −0.1758.
func TestSpearmanWorkedExample(t *testing.T) {
	iq := []float64{106, 86, 100, 101, 99, 103, 97, 113, 112, 110}
	tv := []float64{7, 0, 27, 50, 28, 29, 20, 12, 6, 17}
	got := Spearman(iq, tv)
	if want := -29.0 / 165; math.Abs(got-want) > 1e-12 {
		t.Errorf("Spearman = %.10f, want %.10f", got, want)
	}
}

// Without ties Spearman's ρ equals 1 − 6Σd²/(n(n²−1)) (Spearman 1904; the
// textbook shortcut formula): check the Pearson-on-ranks implementation
// against it on random data, and check tie handling on a small case
// computed by hand (ranks 1, 2.5, 2.5, 4 against 1, 2, 3, 4).
func TestSpearmanAgainstShortcut(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	for trial := 0; trial < 50; trial++ {
		n := 2 + rng.IntN(40)
		x, y := make([]float64, n), make([]float64, n)
		for i := range x {
			x[i], y[i] = rng.Float64(), rng.Float64()+0.3*x[i]
		}
		rx, ry := ranks(x), ranks(y)
		var d2 float64
		for i := range rx {
			d2 += (rx[i] - ry[i]) * (rx[i] - ry[i])
		}
		nf := float64(n)
		want := 1 - 6*d2/(nf*(nf*nf-1))
		if got := Spearman(x, y); math.Abs(got-want) > 1e-9 {
			t.Fatalf("n=%d: Spearman = %v, shortcut formula = %v", n, got, want)
		}
	}
	if got := ranks([]float64{1, 5, 5, 9}); !reflect.DeepEqual(got, []float64{1, 2.5, 2.5, 4}) {
		t.Errorf("ranks with ties = %v", got)
	}
	// Pearson of (1, 2.5, 2.5, 4) and (1, 2, 3, 4) = 4.5/√(4.5·5) = 0.9487.
	if got := Spearman([]float64{1, 5, 5, 9}, []float64{1, 2, 3, 4}); math.Abs(got-4.5/math.Sqrt(4.5*5)) > 1e-12 {
		t.Errorf("Spearman with ties = %v", got)
	}
	if !math.IsNaN(Spearman([]float64{1, 1, 1}, []float64{1, 2, 3})) || !math.IsNaN(Spearman([]float64{1}, []float64{1})) {
		t.Error("constant or too-short input should give NaN")
	}
}

// With a negligible penalty, ridge regression is ordinary least squares:
// data generated exactly from a linear model must give back its
// coefficients (in standardised units: b_j·sd_j).
func TestRidgeRecoversLinearModel(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 3))
	names := []string{"mean_conf", "garbage", "punct"}
	var X [][]float64
	var y []float64
	for i := 0; i < 200; i++ {
		row := []float64{rng.Float64(), rng.Float64() * 0.3, rng.Float64() * 0.1}
		X = append(X, row)
		y = append(y, 0.5-2*row[0]+3*row[1]+10*row[2])
	}
	l := ridge(X, y, names, 1e-12)
	want := []float64{-2, 3, 10}
	for j, tm := range l.Terms {
		if got := tm.Coef / tm.Scale; math.Abs(got-want[j]) > 1e-6 {
			t.Errorf("%s: coefficient %v, want %v", tm.Name, got, want[j])
		}
	}
	for i := 0; i < 5; i++ {
		if d := l.predictRow(X[i]) - y[i]; math.Abs(d) > 1e-6 {
			t.Errorf("row %d: residual %v", i, d)
		}
	}
	// A large penalty shrinks every coefficient towards zero.
	big := ridge(X, y, names, 100)
	for j := range big.Terms {
		if math.Abs(big.Terms[j].Coef) >= math.Abs(l.Terms[j].Coef) {
			t.Errorf("%s: penalty did not shrink the coefficient", names[j])
		}
	}
}

func TestSplitDeterministic(t *testing.T) {
	var s []Sample
	for i := 0; i < 100; i++ {
		s = append(s, Sample{ID: string(rune('a'+i%26)) + string(rune('0'+i/26))})
	}
	fit1, held1 := Split(s, 0.3, 1)
	// Order of the input must not matter.
	rev := append([]Sample(nil), s...)
	for i, j := 0, len(rev)-1; i < j; i, j = i+1, j-1 {
		rev[i], rev[j] = rev[j], rev[i]
	}
	fit2, held2 := Split(rev, 0.3, 1)
	if len(held1) != 30 || len(fit1) != 70 || !reflect.DeepEqual(held1, held2) || !reflect.DeepEqual(fit1, fit2) {
		t.Errorf("split not deterministic: %d/%d", len(fit1), len(held1))
	}
	_, held3 := Split(s, 0.3, 2)
	if reflect.DeepEqual(held1, held3) {
		t.Error("a different seed gave the same split")
	}
}

func TestFitTooFewPages(t *testing.T) {
	if _, err := Fit(make([]Sample, 5), FitOptions{}); err == nil {
		t.Error("Fit on 5 pages: want ErrTooFewPages")
	}
}

func TestTargetsCheck(t *testing.T) {
	e := Evaluation{Spearman: 0.95, Recall: 1, Precision: 0.9, CleanAccepted: 0.97, RescanAbove: 0.1}
	if met, _ := (Targets{}).Check(e); !met {
		t.Error("targets should be met")
	}
	e.Precision = math.NaN()
	if met, lines := (Targets{}).Check(e); met || len(lines) != 4 {
		t.Errorf("NaN precision should not meet its target: %v", lines)
	}
}

// rescanFactor picks the largest factor (steps of 0.01) whose cut catches
// the goal share of the pages above the threshold; values worked by hand.
func TestRescanFactor(t *testing.T) {
	const off = 0.01
	oof := func(est ...float64) []float64 {
		var o []float64
		for _, e := range est {
			o = append(o, math.Log(e+off))
		}
		return o
	}
	// Four pages above 10 %, estimated 20 %, 15 %, 8.55 % and 6 %; one clean.
	est := oof(0.2, 0.15, 0.0855, 0.06, 0.001)
	cer := []float64{0.3, 0.2, 0.12, 0.11, 0.002}
	tests := []struct {
		name string
		goal float64
		want float64
	}{
		{"three of four: the cut must lie under 8.55 %", 0.75, 0.85},
		{"half: the cut may stay at the threshold", 0.5, 1},
		{"all four: 6 % is above 0.59 x 10 %", 1, 0.59},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := rescanFactor(est, cer, off, 0.1, tt.goal); math.Abs(got-tt.want) > 1e-9 {
				t.Errorf("rescanFactor = %v, want %v", got, tt.want)
			}
		})
	}
	// A page estimated 1 % cannot be caught above half the threshold.
	if got := rescanFactor(oof(0.01, 0.3), []float64{0.5, 0.5}, off, 0.1, 1); got != MinRescanFactor {
		t.Errorf("unreachable goal: %v, want MinRescanFactor", got)
	}
	if got := rescanFactor(oof(0.01), []float64{0.05}, off, 0.1, 1); got != 1 {
		t.Errorf("no page above the threshold: %v, want 1", got)
	}
}

// Fit on pages whose CER follows one feature: the factors lie in range,
// the declared recall goal is recorded, and unknown terms are refused.
func TestFitRescanFactorAndTerms(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	var s []Sample
	for i := 0; i < 120; i++ {
		c := rng.Float64()
		cer := math.Min(1, 0.002*math.Exp(6*c)*(0.7+0.6*rng.Float64()))
		f := Features{FromRecord: true, Tokens: 100, LexWords: 80, LexHit: 1 - 0.8*c, MeanConf: 1 - 0.7*c, Letters: 0.9}
		tf := f
		tf.FromRecord, tf.MeanConf = false, 0
		s = append(s, Sample{ID: string(rune('a'+i%26)) + string(rune('a'+i/26)), Record: f, Text: tf, CER: cer})
	}
	m, err := Fit(s, FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for _, l := range []Linear{m.Record, m.Text} {
		if l.RescanFactor < MinRescanFactor || l.RescanFactor > 1 {
			t.Errorf("rescan factor %v outside [%v, 1]", l.RescanFactor, MinRescanFactor)
		}
	}
	if m.Fit.Rescan != DefaultRescan || math.Abs(m.Fit.RecallGoal-0.98) > 1e-12 {
		t.Errorf("FitInfo: rescan %v, recall goal %v; want 0.10, 0.98", m.Fit.Rescan, m.Fit.RecallGoal)
	}
	if _, err := Fit(s, FitOptions{TextTerms: []string{"astrology"}}); err == nil {
		t.Error("Fit with an unknown term: want an error")
	}
}
