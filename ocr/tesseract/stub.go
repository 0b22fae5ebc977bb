//go:build !cgo || notesseract

package tesseract

import "recto/ocr"

// New returns ocr.ErrEngineUnavailable: this build has no engine.
func New(cfg Config) (ocr.Engine, error) { return nil, ocr.ErrEngineUnavailable }

// Languages returns ocr.ErrEngineUnavailable: this build has no engine.
func Languages() ([]string, error) { return nil, ocr.ErrEngineUnavailable }
