//go:build !cgo || notesseract

package tesseract

import (
	"errors"
	"testing"

	"recto/ocr"
)

func TestStubUnavailable(t *testing.T) {
	if e, err := New(Config{}); e != nil || !errors.Is(err, ocr.ErrEngineUnavailable) {
		t.Errorf("New = %v, %v; want nil, ErrEngineUnavailable", e, err)
	}
	if _, err := Languages(); !errors.Is(err, ocr.ErrEngineUnavailable) {
		t.Errorf("Languages error %v, want ErrEngineUnavailable", err)
	}
	_ = engineOrSkip // used by the engine tests in cgo builds
}
