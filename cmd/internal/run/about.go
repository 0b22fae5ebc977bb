package run

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"path/filepath"
	"sync"

	"recto/cmd/internal/run/report"
	"recto/lexicon"
	"recto/ocr"
	"recto/quality"
)

// metaAbout is the ledger meta key of the run's description (report.About
// as JSON, without the dates and the engine, which come from the pages).
const metaAbout = "about"

// metaTarget is the ledger meta key of --target-cer ("" for none).
const metaTarget = "target_cer"

// describe says how a run's figures are made, for the report's header:
// the recto version, languages, thresholds in force, the quality model and
// lexicons with their SHA-256, the normalisation of scoring and the
// interval method. A file's checksum is that of its bytes (sha256sum gives
// the same); an embedded model or lexicon has the checksum of its content
// as recto writes it (the model's JSON, the lexicon's file format), so
// two builds with the same content agree.
func describe(o Options, model *quality.Model, lexFiles []string, lex *lexicon.Lexicon) (report.About, error) {
	th := quality.Thresholds{Rescan: o.Rescan, Correct: o.Correct}
	if th.Rescan == 0 {
		th.Rescan = quality.DefaultRescan
	}
	if th.Correct == 0 {
		th.Correct = quality.DefaultCorrect
	}
	a := report.About{
		Recto: ocr.SoftwareVersion, Lang: o.Lang, Correct: th.Correct, Rescan: th.Rescan,
		RescanFactor:  model.Record.RescanFactor,
		Normalisation: quality.NormOptions{}.String(),
		Interval:      fmt.Sprintf("percentile bootstrap over the pages with ground truth (%d resamples, fixed seed)", quality.DefaultResamples),
	}
	if o.Model != "" {
		s, _, err := hashFile(o.Model)
		if err != nil {
			return a, fmt.Errorf("--quality-model: %w", err)
		}
		a.QualityModel, a.QualityModelSum = filepath.Base(o.Model), s
	} else {
		b, err := json.Marshal(model)
		if err != nil {
			return a, err
		}
		s := sha256.Sum256(b)
		a.QualityModel, a.QualityModelSum = "embedded (quality/model/default.json)", hex.EncodeToString(s[:])
	}
	files := lexFiles
	if o.Lexicon != "" {
		files = []string{o.Lexicon}
	}
	for _, f := range files {
		l := report.Named{Name: filepath.Base(f)}
		switch {
		case f == lexicon.EmbeddedEnglish:
			l.Name, l.SHA256 = f, contentSum(lexicon.Default())
		default:
			s, _, err := hashFile(f)
			if err != nil {
				return a, fmt.Errorf("--lexicon: %w", err)
			}
			l.SHA256 = s
		}
		a.Lexicons = append(a.Lexicons, l)
	}
	if len(files) == 0 && lex == nil {
		a.Lexicons = []report.Named{{Name: "none for " + o.Lang}}
	}
	return a, nil
}

var contentSums sync.Map // *lexicon.Lexicon -> string

// contentSum is the SHA-256 of a lexicon in its file format, computed
// once per lexicon and process (about 0.3 s for the embedded English one).
func contentSum(l *lexicon.Lexicon) string {
	if v, ok := contentSums.Load(l); ok {
		return v.(string)
	}
	h := sha256.New()
	if _, err := l.WriteTo(h); err != nil {
		return ""
	}
	s := hex.EncodeToString(h.Sum(nil))
	contentSums.Store(l, s)
	return s
}
