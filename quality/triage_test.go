package quality

import (
	"math"
	"strings"
	"testing"

	"recto/ocr"
)

// constModel predicts exp(intercept) − offset whatever the features.
func constModel(cer float64) *Model {
	l := Linear{Intercept: logOf(cer + 0.01), Terms: []Term{{Name: "garbage", Scale: 1}}}
	return &Model{Version: ModelVersion, Offset: 0.01, Record: l, Text: l}
}

func logOf(x float64) float64 { return math.Log(x) }

func TestTriageDecisions(t *testing.T) {
	page := Features{FromRecord: true, Tokens: 300, LexWords: 250, LexHit: 0.9, Letters: 0.9, MeanConf: 0.9, LowConf: 0.05}
	tests := []struct {
		name string
		f    Features
		cer  float64
		th   Thresholds
		want string
	}{
		{"clean", page, 0.005, Thresholds{}, DecisionAccept},
		{"at the correct threshold", page, DefaultCorrect - 1e-9, Thresholds{}, DecisionAccept},
		{"needs correction", page, 0.05, Thresholds{}, DecisionCorrect},
		{"needs rescan", page, 0.30, Thresholds{}, DecisionRescan},
		{"stricter rescan threshold", page, 0.05, Thresholds{Rescan: 0.04}, DecisionRescan},
		{"blank", Features{FromRecord: true, Blank: true}, 0.9, Thresholds{}, DecisionBlank},
		{"picture: clean scan, almost no text", Features{FromRecord: true, Tokens: 6, LexWords: 2, LexHit: 0.5, Noise: 6}, 0.9, Thresholds{}, DecisionPicture},
		{"noisy scan, almost no text", Features{FromRecord: true, Tokens: 6, LexWords: 2, LexHit: 0.5, Noise: 30}, 0.9, Thresholds{}, DecisionRescan},
		{"ink, nothing recognised", Features{FromRecord: true, Noise: 30}, 0.001, Thresholds{}, DecisionRescan},
		{"marked blank on a noisy scan", Features{FromRecord: true, Blank: true, Noise: 34}, 0.001, Thresholds{}, DecisionRescan},
		{"marked blank on a clean scan", Features{FromRecord: true, Blank: true, Noise: 5.7}, 0.9, Thresholds{}, DecisionBlank},
		{"text only, empty", Features{Blank: true}, 0.9, Thresholds{}, DecisionBlank},
		{"nearly blank: a page number", Features{FromRecord: true, Tokens: 1, Chars: 2, Noise: 6}, 0.9, Thresholds{}, DecisionBlank},
		{"text-shaped ink, nothing read", Features{FromRecord: true, InkMeasured: true, TextLikeInk: true, InkLines: 40, Noise: 3}, 0.001, Thresholds{}, DecisionRescan},
		{"text-shaped ink, a few words", Features{FromRecord: true, InkMeasured: true, TextLikeInk: true, InkLines: 40, Tokens: 6, Chars: 20, LexWords: 2, LexHit: 0.5, Noise: 3}, 0.001, Thresholds{}, DecisionRescan},
		{"text-shaped ink, two characters", Features{FromRecord: true, InkMeasured: true, TextLikeInk: true, InkLines: 12, Tokens: 1, Chars: 2, Noise: 3}, 0.001, Thresholds{}, DecisionRescan},
		{"ink not shaped like text, nothing read", Features{FromRecord: true, InkMeasured: true, InkLines: 2, Noise: 3}, 0.9, Thresholds{}, DecisionPicture},
		{"ink not shaped like text, noisy scan", Features{FromRecord: true, InkMeasured: true, InkLines: 2, Noise: 30}, 0.9, Thresholds{}, DecisionRescan},
		// The engine's junk in an engraving (leptonlib's cavalerie.11.jpg:
		// 29 words, 90 % under confidence 60, 37 % in the lexicon).
		{"ink not shaped like text, junk words", Features{FromRecord: true, InkMeasured: true, InkLines: 14, Tokens: 29, Chars: 120, LexWords: 19, LexHit: 0.37, LowConf: 0.9, Noise: 3}, 0.9, Thresholds{}, DecisionPicture},
		// A drawing's caption read well (lion-page.00010.jpg: 14 words,
		// 14 % under confidence 60): 12 confident words, under 20.
		{"ink not shaped like text, a caption", Features{FromRecord: true, InkMeasured: true, InkLines: 6, Tokens: 14, Chars: 60, LexWords: 13, LexHit: 0.92, LowConf: 0.14, Noise: 0.4}, 0.03, Thresholds{}, DecisionPicture},
		// 20 words at confidence 60 or more: not a picture, whatever the ink.
		{"ink not shaped like text, 20 confident words", Features{FromRecord: true, InkMeasured: true, InkLines: 5, Tokens: 20, Chars: 90, LexWords: 20, LexHit: 1, LowConf: 0, Noise: 0.3}, 0.01, Thresholds{}, DecisionAccept},
		// Print too small for the resolution (leptonlib's
		// binding-example.45.jpg, an open book photographed at 45 dpi:
		// nothing read), also with two characters read (not nearly blank),
		// and with junk words; read well, the page is judged as any other.
		{"small text-shaped ink, nothing read", Features{FromRecord: true, InkMeasured: true, SmallTextInk: true, InkLines: 5, Noise: 2}, 0.9, Thresholds{}, DecisionRescan},
		{"small text-shaped ink, two characters", Features{FromRecord: true, InkMeasured: true, SmallTextInk: true, InkLines: 5, Tokens: 1, Chars: 2, Noise: 2}, 0.9, Thresholds{}, DecisionRescan},
		{"small text-shaped ink, junk words", Features{FromRecord: true, InkMeasured: true, SmallTextInk: true, InkLines: 5, Tokens: 29, Chars: 120, LexWords: 19, LexHit: 0.37, LowConf: 0.9, Noise: 2}, 0.9, Thresholds{}, DecisionRescan},
		{"small text-shaped ink, read well", Features{FromRecord: true, InkMeasured: true, SmallTextInk: true, InkLines: 5, Tokens: 300, Chars: 1500, LexWords: 250, LexHit: 0.9, LowConf: 0.05, Noise: 2}, 0.005, Thresholds{}, DecisionAccept},
		{"ink not shaped like text, many words", Features{FromRecord: true, InkMeasured: true, InkLines: 40, Tokens: 330, Chars: 1500, LexWords: 250, LexHit: 0.5, LowConf: 0.9, Noise: 0}, 0.3, Thresholds{}, DecisionRescan},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			v := Triage(tt.f, constModel(tt.cer), tt.th)
			if v.Decision != tt.want {
				t.Errorf("decision %s, want %s (predicted %.4f)", v.Decision, tt.want, v.PredictedCER)
			}
			if len(v.Reasons) == 0 {
				t.Error("no reasons given")
			}
		})
	}
}

// A model whose rescan factor is 0.7 sends a page estimated at 8 % for
// rescanning under the 10 % threshold and says why; at 6 % it does not.
func TestTriageRescanFactor(t *testing.T) {
	page := Features{FromRecord: true, Tokens: 300, LexWords: 250, LexHit: 0.9, Letters: 0.9, MeanConf: 0.9, LowConf: 0.05}
	for _, tt := range []struct {
		cer  float64
		want string
	}{{0.08, DecisionRescan}, {0.06, DecisionCorrect}, {0.12, DecisionRescan}} {
		m := constModel(tt.cer)
		m.Record.RescanFactor = 0.7
		v := Triage(page, m, Thresholds{})
		if v.Decision != tt.want {
			t.Errorf("estimate %.2f: %s, want %s", tt.cer, v.Decision, tt.want)
		}
		margin := strings.Contains(strings.Join(v.Reasons, "; "), "margin")
		if margin != (tt.cer == 0.08) {
			t.Errorf("estimate %.2f: reasons %q", tt.cer, v.Reasons)
		}
	}
}

func TestTriageReasons(t *testing.T) {
	f := Features{FromRecord: true, Tokens: 200, Chars: 1000, LexWords: 150, LexHit: 0.12, LexHitChars: 0.12, LowConf: 0.58,
		MeanConf: 0.55, CharConf: 0.55, ConfUnder30: 0.2, ConfUnder90: 0.9, Garbage: 0.3, Letters: 0.7}
	v := Triage(f, DefaultModel(), Thresholds{})
	all := strings.Join(v.Reasons, "; ")
	for _, want := range []string{"58% of words under confidence 60", "12% of words in the lexicon"} {
		if !strings.Contains(all, want) {
			t.Errorf("reasons %q lack %q", all, want)
		}
	}
	v = Triage(Features{FromRecord: true, Blank: true}, nil, Thresholds{})
	if v.Decision != DecisionBlank || v.Reasons[0] != "page is blank" {
		t.Errorf("blank page: %+v", v)
	}
	f.FromRecord = false
	v = Triage(f, nil, Thresholds{})
	if !strings.Contains(strings.Join(v.Reasons, "; "), "plain text only") {
		t.Errorf("text-only page should say so: %q", v.Reasons)
	}
}

// TestTriageReasonsExplain (issue 17, triage's words): the reasons list
// only what explains the decision, in a fixed order. An accepted clean
// page says nothing about defects it does not have; a page sent for
// rescanning lists the evidence that raised its estimate, confidence
// before lexicon before the defects, whichever weighed more.
func TestTriageReasonsExplain(t *testing.T) {
	// Page records of the triage test collection (testdata/triage: demo
	// pages recognised by Tesseract), one clean, one badly read.
	read := func(name string) Features {
		rec, err := ocr.ReadRecord("../testdata/triage/ocr/" + name + ".json")
		if err != nil {
			t.Fatal(err)
		}
		return PageFeatures(rec, nil)
	}
	v := Triage(read("s00004"), nil, Thresholds{})
	if v.Decision != DecisionAccept {
		t.Fatalf("clean page: %s %v", v.Decision, v.Reasons)
	}
	all := strings.Join(v.Reasons, "; ")
	for _, not := range []string{"stray mark", "garbage", "single characters", "not letters"} {
		if strings.Contains(all, not) {
			t.Errorf("accepted clean page: reasons %q mention %q", all, not)
		}
	}
	for _, name := range []string{"s00015", "s00005", "s00124", "s00281"} {
		v = Triage(read(name), nil, Thresholds{})
		checkOrder(t, name, v)
	}
}

// checkOrder checks that a page sent for rescanning has reasons in the
// fixed order, at least two of them.
func checkOrder(t *testing.T, name string, v Verdict) {
	t.Helper()
	if v.Decision != DecisionRescan {
		t.Fatalf("%s: %s %v, want rescan", name, v.Decision, v.Reasons)
	}
	order := []string{"under confidence", "in the lexicon", "garbage", "not letters", "stray mark", "single characters", "margin"}
	last := -1
	for _, r := range v.Reasons {
		i := -1
		for k, o := range order {
			if strings.Contains(r, o) {
				i = k
			}
		}
		if i < 0 || i <= last {
			t.Errorf("%s: reasons %q out of the fixed order %q", name, v.Reasons, order)
			break
		}
		last = i
	}
	if len(v.Reasons) < 2 {
		t.Errorf("%s: reasons %q", name, v.Reasons)
	}
}

func TestThresholdsValidate(t *testing.T) {
	for _, th := range []Thresholds{{Rescan: 1.5}, {Rescan: -0.1}, {Rescan: 0.05, Correct: 0.08}} {
		if th.Validate() == nil {
			t.Errorf("%+v should be invalid", th)
		}
	}
	if (Thresholds{}).Validate() != nil {
		t.Error("zero thresholds should be valid (defaults)")
	}
}
