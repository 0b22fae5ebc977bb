package ocr

import (
	"encoding/json"
	"fmt"
	"os"
)

// RecordVersion is the version of the Record format written by this build.
const RecordVersion = 1

// Record is what recognition of one page produced: the sidecar that
// `recto ocr` writes as <name>.json and that triage, correction and the
// batch run read back.
type Record struct {
	Version int    `json:"version"` // RecordVersion
	Source  string `json:"source"`  // page image path as given by the user
	SHA256  string `json:"sha256"`  // hex SHA-256 of the source file's bytes

	// FilePage is the page's number in a multi-page source file (a
	// multi-page TIFF, a PDF), from 1, and FilePages the file's page
	// count; both 0 for a single image.
	FilePage  int `json:"file_page,omitempty"`
	FilePages int `json:"file_pages,omitempty"`

	// Lang is the engine language list the page was read with ("eng",
	// "nor", "eng+deu"; Tesseract's codes); triage and correction take
	// their lexicon from it when not told otherwise. Empty in records
	// written before it was recorded.
	Lang string `json:"lang,omitempty"`

	Width  int     `json:"width"`  // original image width, pixels
	Height int     `json:"height"` // original image height, pixels
	DPI    float64 `json:"dpi"`    // resolution used for the page: see DPISource

	// TaggedDPI is the resolution the file declares, 0 when it has none;
	// EstimatedDPI the resolution estimated from the size of the text
	// (ocr.EstimateDPI: the resolution at which it would be 10-point type),
	// 0 when no text-like ink was measured; DPISource says which was used:
	// "tag", "estimate" (no tag, or a tag that does not fit the text),
	// "option" (--dpi, for untagged files) or "default" (300 dpi).
	TaggedDPI    float64 `json:"dpi_tagged"`
	EstimatedDPI float64 `json:"dpi_estimated"`
	DPISource    string  `json:"dpi_source,omitempty"`

	// Ink is the shape of the page's ink (how much of it forms lines of
	// letter-sized marks), measured on the page before recognition; nil
	// in records written before it was measured.
	Ink *InkShape `json:"ink,omitempty"`

	Skew         float64 `json:"skew_degrees"`        // skew found, degrees, counter-clockwise positive
	Binarization string  `json:"binarization"`        // "otsu", "sauvola", or "none"
	Threshold    int     `json:"threshold,omitempty"` // global threshold 0-255 when Binarization is "otsu"
	Noise        float64 `json:"noise"`               // estimated noise, standard deviation in grey levels
	Blank        bool    `json:"blank"`               // no ink worth recognising was found

	// The skew measured, rotated or not (Skew is the rotation applied),
	// the sharpness of its peak (1 for a flat curve; rotated only from
	// 1.1 and 0.25°) and the ink it was measured on: "text" (text-like
	// components only) or "all ink".
	SkewEstimate   float64 `json:"skew_estimate_degrees"`
	SkewConfidence float64 `json:"skew_confidence"`
	SkewMeasuredOn string  `json:"skew_measured_on,omitempty"`

	// Orientation is what orientation detection found, when the engine
	// has it (nil otherwise, and with no preparation).
	Orientation *Orientation `json:"orientation,omitempty"`

	MeanConfidence float64 `json:"mean_confidence"` // mean word confidence in [0, 1]; 0 with no words
	Words          []Word  `json:"words"`           // in reading order

	TimingsMS map[string]float64 `json:"timings_ms"` // milliseconds per step, e.g. "deskew", "engine"

	// Warnings are things about the source the user should know that did
	// not stop recognition, e.g. the skipped pages of a multi-page TIFF.
	Warnings []string `json:"warnings,omitempty"`

	// Reading says which of two readings was kept when the self-check
	// found the reading of the prepared page poor and read the original
	// page too; nil when only the prepared page was read.
	Reading *Reading `json:"reading,omitempty"`

	// Engine names the recognition engine, its version and settings, for
	// the ALTO Processing description; nil when the engine does not say
	// (see EngineDescriber).
	Engine *EngineInfo `json:"engine,omitempty"`
}

// Reading records the self-check of one page (Options.SelfCheck): why
// the original page was read too, both readings' scores (the letters and
// digits, and the words of three letters or more, read with confidence
// ConfidentWord or more), the quality estimate of each when there was one
// (Options.PredictCER) and which reading was kept.
type Reading struct {
	Kept          string `json:"kept"`             // "prepared" or "original" (no preparation)
	Reason        string `json:"reason,omitempty"` // why the original page was read too
	PreparedScore int    `json:"prepared_score"`   // confident letters in the prepared page's reading
	OriginalScore int    `json:"original_score"`   // confident letters in the original page's reading

	// Confidently read words of three letters or more in each reading:
	// the reading with more is kept; on a tie the one with the lower
	// predicted CER, else the one with more confident letters.
	PreparedWords int `json:"prepared_words"`
	OriginalWords int `json:"original_words"`

	// The quality estimate (predicted CER, a fraction) of each reading;
	// absent when the caller gave no estimate (Options.PredictCER).
	PreparedPredictedCER *float64 `json:"prepared_predicted_cer,omitempty"`
	OriginalPredictedCER *float64 `json:"original_predicted_cer,omitempty"`
}

// Word is one recognised word.
type Word struct {
	Text  string  `json:"text"`
	Conf  float64 `json:"conf"`  // engine confidence in [0, 1], not percent
	Box   Box     `json:"box"`   // original image pixels
	Block int     `json:"block"` // engine block (e.g. a column) on the page, reading order, from 0
	Par   int     `json:"par"`   // paragraph index on the page (not within the block), from 0
	Line  int     `json:"line"`  // line index on the page (not within the block), from 0

	// Alt holds other readings of the word, most likely first; correction
	// puts the engine's original reading here when it changes Text. ALTO
	// output writes them as ALTERNATIVE elements.
	Alt []string `json:"alt,omitempty"`
}

// Box is an axis-aligned rectangle in pixels.
type Box struct {
	X int `json:"x"` // left edge
	Y int `json:"y"` // top edge
	W int `json:"w"` // width
	H int `json:"h"` // height
}

// Text returns the page text rebuilt from the words: words of a line joined
// by single spaces, lines by "\n", paragraphs and blocks separated by a
// blank line, as the tesseract command writes its text.
func (r *Record) Text() string {
	var b []byte
	for i, w := range r.Words {
		if i > 0 {
			prev := r.Words[i-1]
			switch {
			case w.Block != prev.Block || w.Par != prev.Par:
				b = append(b, '\n', '\n')
			case w.Line != prev.Line:
				b = append(b, '\n')
			default:
				b = append(b, ' ')
			}
		}
		b = append(b, w.Text...)
	}
	if len(b) > 0 {
		b = append(b, '\n')
	}
	return string(b)
}

// ReadRecord reads a Record written by WriteRecord. It returns an error that
// names the file when it cannot be read, is not JSON of the expected shape,
// or has a version this build does not know.
func ReadRecord(path string) (*Record, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("ocr: %w", err)
	}
	var r Record
	if err := json.Unmarshal(data, &r); err != nil {
		return nil, fmt.Errorf("ocr: %q: not a page record: %w", path, err)
	}
	if r.Version != RecordVersion {
		return nil, fmt.Errorf("ocr: %q: page record version %d, this build reads version %d", path, r.Version, RecordVersion)
	}
	return &r, nil
}
