package tesseract

import (
	"errors"
	"testing"

	"recto/ocr"
)

func TestDebianPackage(t *testing.T) {
	// Debian names Tesseract language packages tesseract-ocr-<code>, with
	// "_" turned into "-" (common practice; e.g. tesseract-ocr-chi-sim in
	// Debian 12).
	for _, c := range []struct{ lang, want string }{
		{"deu", "tesseract-ocr-deu"},
		{"chi_sim", "tesseract-ocr-chi-sim"},
		{"deu_latf", "tesseract-ocr-deu-latf"},
		// The script model: dpkg -L tesseract-ocr-script-frak (Debian 12,
		// 1:4.1.0-2) lists /usr/share/tesseract-ocr/5/tessdata/Fraktur.traineddata.
		{"Fraktur", "tesseract-ocr-script-frak"},
		{"script/Fraktur", "tesseract-ocr-script-frak"},
	} {
		if got := DebianPackage(c.lang); got != c.want {
			t.Errorf("DebianPackage(%q) = %q, want %q", c.lang, got, c.want)
		}
	}
}

func TestResolveScripts(t *testing.T) {
	// Debian 12 installs the Fraktur script model as Fraktur.traineddata
	// (dpkg -L tesseract-ocr-script-frak); Tesseract's tessdata repository
	// keeps it as script/Fraktur.traineddata.
	debian := []string{"Fraktur", "deu", "eng"}
	if got := ResolveScripts([]string{"script/Fraktur", "deu"}, debian); got[0] != "Fraktur" || got[1] != "deu" {
		t.Errorf("Debian layout: %v, want [Fraktur deu]", got)
	}
	upstream := []string{"deu", "eng", "script/Fraktur"}
	if got := ResolveScripts([]string{"script/Fraktur"}, upstream); got[0] != "script/Fraktur" {
		t.Errorf("upstream layout: %v, want [script/Fraktur]", got)
	}
	if got := ResolveScripts([]string{"script/Latin"}, debian); got[0] != "script/Latin" {
		t.Errorf("missing script: %v, want it kept (and then reported missing)", got)
	}
}

func TestCheckLangs(t *testing.T) {
	have := []string{"deu", "eng"}
	if err := checkLangs([]string{"eng", "deu"}, have); err != nil {
		t.Errorf("eng+deu: %v", err)
	}
	err := checkLangs([]string{"eng", "fra"}, have)
	var ml *MissingLanguageError
	if !errors.As(err, &ml) || ml.Lang != "fra" {
		t.Fatalf("eng+fra: got %v, want a MissingLanguageError for fra", err)
	}
	if want := "tesseract-ocr-fra"; !contains(err.Error(), want) {
		t.Errorf("error %q does not name the package %s", err, want)
	}
	if err := checkLangs([]string{"eng", ""}, have); err == nil {
		t.Error(`"eng+" accepted`)
	}
}

func contains(s, sub string) bool {
	for i := 0; i+len(sub) <= len(s); i++ {
		if s[i:i+len(sub)] == sub {
			return true
		}
	}
	return false
}

// engineOrSkip returns an English engine or skips the test, saying why.
func engineOrSkip(t testing.TB, cfg Config) ocr.Engine {
	t.Helper()
	e, err := New(cfg)
	switch {
	case errors.Is(err, ocr.ErrEngineUnavailable):
		t.Skip("engine tests skipped: built without cgo or with the notesseract tag")
	case err != nil:
		t.Skipf("engine tests skipped: Tesseract or its English data is not usable here: %v", err)
	}
	t.Cleanup(func() { e.Close() })
	return e
}
