//go:build !cgo || notesseract

package lept

// Available reports whether this build decodes through Leptonica: not
// this one (built without cgo or with the notesseract tag), where package
// ocr keeps its pure-Go decoders only.
func Available() bool { return false }
