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
	} {
		if got := DebianPackage(c.lang); got != c.want {
			t.Errorf("DebianPackage(%q) = %q, want %q", c.lang, got, c.want)
		}
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
