// Package tesseract adapts Tesseract 5, through gosseract, to ocr.Engine.
//
// It is the only package of recto that needs cgo. Built without cgo, or
// with the notesseract build tag, New returns ocr.ErrEngineUnavailable and
// Languages returns an empty list with the same error.
//
// Each Engine owns one Tesseract client; never share an Engine between
// goroutines. Pages reach the engine in memory, as a binary PGM (header
// plus raw bytes), and one recognition pass yields text, boxes and
// confidences together.
//
// Tesseract's OpenMP threads oversubscribe the cores when pages run in
// parallel. libgomp reads OMP_THREAD_LIMIT when it is loaded, before any Go
// code runs, so setting it from Go is too late; instead the adapter turns
// off OpenMP parallel regions in the running process (see limitThreads).
// Setting OMP_THREAD_LIMIT=1 in the environment has the same effect.
package tesseract

import (
	"fmt"
	"slices"
	"strings"
)

// Config configures an Engine. The zero value recognises English with
// Tesseract's default page segmentation and data directory.
type Config struct {
	Lang    string // language(s), "+"-separated, e.g. "eng+deu"; "" means "eng"
	PSM     int    // page segmentation mode 1-13; 0 means 3 (fully automatic, the tesseract command's default)
	DataDir string // tessdata directory; "" means TESSDATA_PREFIX or the installed default
}

// DefaultPSM is the page segmentation mode used when Config.PSM is 0:
// fully automatic page segmentation without orientation detection, the
// default of the tesseract command (Tesseract's publictypes.h, PSM_AUTO).
// The library's own default is 6 (one uniform block), which runs the
// columns of a multi-column page together.
const DefaultPSM = 3

func (c Config) psm() int {
	if c.PSM == 0 {
		return DefaultPSM
	}
	return c.PSM
}

func (c Config) langs() []string {
	if c.Lang == "" {
		return []string{"eng"}
	}
	return strings.Split(c.Lang, "+")
}

// MissingLanguageError is returned by New when a requested language has no
// trained data installed.
type MissingLanguageError struct {
	Lang      string   // the missing language code, e.g. "deu"
	Installed []string // languages that are installed
}

func (e *MissingLanguageError) Error() string {
	return fmt.Sprintf("tesseract: language %q is not installed (installed: %s); on Debian install the package %s",
		e.Lang, strings.Join(e.Installed, ", "), DebianPackage(e.Lang))
}

// DebianPackage returns the name of the Debian package that holds the
// trained data for a Tesseract language code, e.g. "tesseract-ocr-deu"
// for "deu" and "tesseract-ocr-chi-sim" for "chi_sim" (Debian's naming,
// common practice). The script models (Tesseract's script/<Name>, which
// Debian 12 installs as <Name>.traineddata in the tessdata folder) are
// packaged as tesseract-ocr-script-<abbreviation>: "Fraktur" and
// "script/Fraktur" give "tesseract-ocr-script-frak".
func DebianPackage(lang string) string {
	name := strings.TrimPrefix(lang, "script/")
	if p, ok := scriptPackages[name]; ok {
		return p
	}
	return "tesseract-ocr-" + strings.ReplaceAll(strings.ToLower(lang), "_", "-")
}

// scriptPackages names the Debian packages of the script models recto
// documents (Debian 12 package list: tesseract-ocr-script-frak holds
// Fraktur.traineddata, tesseract-ocr-script-latn Latin.traineddata).
var scriptPackages = map[string]string{
	"Fraktur": "tesseract-ocr-script-frak",
	"Latin":   "tesseract-ocr-script-latn",
}

// ResolveScripts returns want with each script model written as Tesseract's
// own tessdata has it ("script/Fraktur") replaced by the name it is
// installed under when only that is installed: Debian 12's
// tesseract-ocr-script-frak puts Fraktur.traineddata beside the languages,
// so "script/Fraktur" and "Fraktur" both mean that file.
func ResolveScripts(want, have []string) []string {
	out := make([]string, len(want))
	for i, l := range want {
		out[i] = l
		name, ok := strings.CutPrefix(l, "script/")
		if ok && !slices.Contains(have, l) && slices.Contains(have, name) {
			out[i] = name
		}
	}
	return out
}

// checkLangs reports the first of want that is not in have.
func checkLangs(want, have []string) error {
	for _, l := range want {
		if l == "" {
			return fmt.Errorf("tesseract: empty language in %q", strings.Join(want, "+"))
		}
		found := false
		for _, h := range have {
			if h == l {
				found = true
				break
			}
		}
		if !found {
			return &MissingLanguageError{Lang: l, Installed: have}
		}
	}
	return nil
}
