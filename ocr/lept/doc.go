// Package lept lets package ocr decode, through Leptonica (D. Bloomberg,
// leptonica.org, BSD-2; the image library installed with Tesseract), the
// image variants that Go's decoders refuse: 2- and 4-bit grey TIFF, CCITT
// Group 3 with End-of-Line codes, JPEG inside TIFF (old and new style),
// JPEG 2000 (.jp2, .j2k) and PNM.
//
// Importing the package registers the decoder (ocr.RegisterExtraDecoder);
// package ocr/tesseract imports it, so every engine build has it. Built
// without cgo or with the notesseract tag the package registers nothing,
// Available returns false, and ocr names the variants that need the engine
// build in its ErrUnsupported errors.
//
// Package ocr checks the pixel count on the file's header before any pixel
// is decoded here; Go's decoders stay first, Leptonica reads only what they
// refuse as unsupported.
package lept
