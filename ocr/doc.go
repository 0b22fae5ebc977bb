// Package ocr prepares scanned page images for recognition (greyscale,
// noise estimate and denoising, deskew, binarisation, clean-up) and defines
// the engine interface and the per-page record that recognition produces.
//
// Package ocr is pure Go. The Tesseract adapter lives in ocr/tesseract, the
// only package of recto that needs cgo.
//
// Coordinates in a Record are pixels of the original image as decoded
// (before any rotation), origin at the top left. Confidences lie in [0, 1].
package ocr
