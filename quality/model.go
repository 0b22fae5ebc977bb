package quality

import (
	_ "embed"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"sync"

	"recto/internal/atomicfile"
)

// ModelVersion is the version of the model file format written by Save.
const ModelVersion = 1

// Model estimates a page's CER from its Features. It is a pair of ridge
// regressions (Hoerl & Kennard, "Ridge regression: biased estimation for
// nonorthogonal problems", Technometrics, 1970) of log(CER + Offset) on
// standardised terms: one for page records (confidences available), one
// for plain text. Every coefficient is in the JSON file with the term it
// weighs, so a prediction can be explained term by term (Contributions).
type Model struct {
	Version int     `json:"version"` // ModelVersion
	Offset  float64 `json:"offset"`  // the regression target is log(CER + Offset)
	Record  Linear  `json:"record"`  // used when Features.FromRecord
	Text    Linear  `json:"text"`    // used for plain text
	Fit     FitInfo `json:"fit"`     // how the model was made
}

// Linear is one regression: y = Intercept + Σ Coef·(x − Mean)/Scale
// predicts log(CER + Offset); the CER estimate is Smear·exp(y) − Offset.
type Linear struct {
	Intercept float64 `json:"intercept"`
	Smear     float64 `json:"smear"`  // retransformation factor (Duan's smearing estimate); 0 is read as 1
	Lambda    float64 `json:"lambda"` // ridge penalty used, on standardised terms
	Terms     []Term  `json:"terms"`

	// RescanFactor scales the rescan threshold: a page is sent for
	// rescanning when its estimate exceeds RescanFactor·Thresholds.Rescan.
	// Fit chooses it in [MinRescanFactor, 1] so that few pages above the
	// threshold slip through (see FitOptions.Recall); 0 is read as 1.
	RescanFactor float64 `json:"rescan_factor,omitempty"`
}

// Term is one input of a Linear model.
type Term struct {
	Name  string  `json:"name"`  // see termFuncs
	Mean  float64 `json:"mean"`  // mean of the term over the fitting pages
	Scale float64 `json:"scale"` // standard deviation over the fitting pages (1 if zero)
	Coef  float64 `json:"coef"`  // weight of the standardised term
}

// FitInfo records the provenance of a fitted model.
type FitInfo struct {
	Source      string  `json:"source"`       // what the model was fitted on
	Pages       int     `json:"pages"`        // pages used for fitting the record model
	TextPages   int     `json:"text_pages"`   // pages used for fitting the text model
	Seed        int64   `json:"seed"`         // seed of the cross-validation folds
	Holdout     float64 `json:"holdout"`      // share of pages held out before fitting (0 when a split was given)
	HeldOut     int     `json:"held_out"`     // pages held out
	Command     string  `json:"command"`      // command that reproduces the fit
	TrainSpread float64 `json:"train_spread"` // standard deviation of log(CER+Offset) over the fitting pages
	Rescan      float64 `json:"rescan"`       // rescan threshold on measured CER the rescan factors were chosen for
	RecallGoal  float64 `json:"recall_goal"`  // out-of-fold recall the rescan factors were chosen to reach
}

// termFuncs defines every term a model may use, by name.
var termFuncs = map[string]func(f *Features) float64{
	"mean_conf":     func(f *Features) float64 { return f.MeanConf },
	"low_conf":      func(f *Features) float64 { return f.LowConf },
	"sqrt_low_conf": func(f *Features) float64 { return math.Sqrt(f.LowConf) },
	"lex_miss":      func(f *Features) float64 { return lexMiss(f) },
	"sqrt_lex_miss": func(f *Features) float64 { return math.Sqrt(lexMiss(f)) },
	"garbage":       func(f *Features) float64 { return f.Garbage },
	"sqrt_garbage":  func(f *Features) float64 { return math.Sqrt(f.Garbage) },
	"short":         func(f *Features) float64 { return f.Short },
	"non_letter":    func(f *Features) float64 { return 1 - f.Letters },
	"punct":         func(f *Features) float64 { return f.Punct },
	"symbols":       func(f *Features) float64 { return f.Symbols },
	"digits":        func(f *Features) float64 { return f.Digits },
	"upper":         func(f *Features) float64 { return f.Upper },
	"log_tokens":    func(f *Features) float64 { return math.Log1p(float64(f.Tokens)) },
	"conf_x_miss":   func(f *Features) float64 { return (1 - f.MeanConf) * lexMiss(f) },
	"coverage":      func(f *Features) float64 { return f.Coverage },
	"log_density":   func(f *Features) float64 { return math.Log1p(f.Density) },
	"noise":         func(f *Features) float64 { return f.Noise },
	"conf_under_30": func(f *Features) float64 { return f.ConfUnder30 },
	"conf_under_90": func(f *Features) float64 { return f.ConfUnder90 },
	"char_doubt":    func(f *Features) float64 { return 1 - f.CharConf },
	"lex_miss_chars": func(f *Features) float64 {
		if f.LexWords == 0 {
			return 1
		}
		return 1 - f.LexHitChars
	},
	"stray":              func(f *Features) float64 { return f.Stray },
	"sqrt_stray":         func(f *Features) float64 { return math.Sqrt(f.Stray) },
	"edge_junk":          func(f *Features) float64 { return f.EdgeJunk },
	"suspect":            func(f *Features) float64 { return f.Suspect },
	"sqrt_suspect":       func(f *Features) float64 { return math.Sqrt(f.Suspect) },
	"suspect_doubt":      func(f *Features) float64 { return f.SuspectDoubt },
	"sqrt_suspect_doubt": func(f *Features) float64 { return math.Sqrt(f.SuspectDoubt) },
}

// recordTerms and textTerms are the terms Fit uses.
var (
	textTerms = []string{"lex_miss", "sqrt_lex_miss", "lex_miss_chars", "garbage", "sqrt_garbage", "sqrt_stray", "edge_junk",
		"suspect", "short", "non_letter", "punct", "symbols", "digits", "upper", "log_tokens"}
	recordTerms = append([]string{"mean_conf", "low_conf", "sqrt_low_conf", "conf_under_30", "conf_under_90", "char_doubt",
		"sqrt_suspect_doubt", "conf_x_miss", "coverage", "log_density", "noise"}, textTerms...)
)

func lexMiss(f *Features) float64 {
	if f.LexWords == 0 {
		return 1
	}
	return 1 - f.LexHit
}

//go:embed model/default.json
var defaultModelJSON []byte

var (
	defaultModelOnce sync.Once
	defaultModel     *Model
)

// DefaultModel returns the embedded model, fitted on the project's
// synthetic corpus by cmd/fitquality. The result is shared: callers must
// not modify it.
func DefaultModel() *Model {
	defaultModelOnce.Do(func() {
		m, err := parseModel(defaultModelJSON, "model/default.json (embedded)")
		if err != nil {
			panic(err) // the embedded file is part of the build; its test catches this
		}
		defaultModel = m
	})
	return defaultModel
}

// ErrModel is wrapped by errors about model files.
var ErrModel = errors.New("invalid quality model")

// LoadModel reads a model written by Save. It returns nil and an error
// naming the file when it cannot be read or is not a valid model.
func LoadModel(path string) (*Model, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("quality: %w", err)
	}
	return parseModel(data, path)
}

func parseModel(data []byte, name string) (*Model, error) {
	var m Model
	if err := json.Unmarshal(data, &m); err != nil {
		return nil, fmt.Errorf("quality: %q: %w: %v", name, ErrModel, err)
	}
	if m.Version != ModelVersion {
		return nil, fmt.Errorf("quality: %q: %w: version %d, this build reads version %d", name, ErrModel, m.Version, ModelVersion)
	}
	if !(m.Offset > 0) {
		return nil, fmt.Errorf("quality: %q: %w: offset must be positive", name, ErrModel)
	}
	for _, l := range []*Linear{&m.Record, &m.Text} {
		if len(l.Terms) == 0 {
			return nil, fmt.Errorf("quality: %q: %w: a regression without terms", name, ErrModel)
		}
		if !(l.RescanFactor >= 0 && l.RescanFactor <= 1) {
			return nil, fmt.Errorf("quality: %q: %w: rescan factor %v outside [0, 1]", name, ErrModel, l.RescanFactor)
		}
		for _, t := range l.Terms {
			if termFuncs[t.Name] == nil {
				return nil, fmt.Errorf("quality: %q: %w: unknown term %q", name, ErrModel, t.Name)
			}
			if !(t.Scale > 0) || math.IsNaN(t.Coef) || math.IsInf(t.Coef, 0) || math.IsNaN(t.Mean) || math.IsInf(t.Mean, 0) {
				return nil, fmt.Errorf("quality: %q: %w: term %q has scale %v, coefficient %v", name, ErrModel, t.Name, t.Scale, t.Coef)
			}
		}
	}
	return &m, nil
}

// Save writes the model as indented JSON to path atomically (package
// internal/atomicfile).
func (m *Model) Save(path string) error {
	data, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return fmt.Errorf("quality: %w", err)
	}
	if err := atomicfile.Write(path, append(data, '\n')); err != nil {
		return fmt.Errorf("quality: %w", err)
	}
	return nil
}

// linear returns the regression that applies to f.
func (m *Model) linear(f *Features) *Linear {
	if f.FromRecord {
		return &m.Record
	}
	return &m.Text
}

// PredictCER returns the estimated CER of a page, in [0, 1].
func (m *Model) PredictCER(f Features) float64 {
	l := m.linear(&f)
	y := l.Intercept
	for _, t := range l.Terms {
		y += t.Coef * (termFuncs[t.Name](&f) - t.Mean) / t.Scale
	}
	smear := l.Smear
	if smear == 0 {
		smear = 1
	}
	return clamp01(smear*math.Exp(y) - m.Offset)
}

// rescanCut returns the estimate above which f's page is sent for
// rescanning under the threshold rescan.
func (m *Model) rescanCut(f *Features, rescan float64) float64 {
	if k := m.linear(f).RescanFactor; k > 0 {
		return k * rescan
	}
	return rescan
}

// Contribution is one term's share of a prediction, in units of
// log(CER + Offset) relative to an average fitting page.
type Contribution struct {
	Term  string  `json:"term"`
	Value float64 `json:"value"` // the term's value for this page
	Delta float64 `json:"delta"` // Coef·(Value − Mean)/Scale
}

// Contributions explains PredictCER(f): each term's contribution, in the
// model's order.
func (m *Model) Contributions(f Features) []Contribution {
	l := m.linear(&f)
	out := make([]Contribution, len(l.Terms))
	for i, t := range l.Terms {
		v := termFuncs[t.Name](&f)
		out[i] = Contribution{Term: t.Name, Value: v, Delta: t.Coef * (v - t.Mean) / t.Scale}
	}
	return out
}

func clamp01(x float64) float64 {
	switch {
	case math.IsNaN(x) || x < 0:
		return 0
	case x > 1:
		return 1
	}
	return x
}
