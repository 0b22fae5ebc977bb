//go:build cgo && !notesseract

package tesseract

import (
	// Every engine build decodes through Leptonica what Go's decoders
	// refuse (4-bit grey, CCITT G3 with EOL codes, JPEG in TIFF, JPEG
	// 2000, PNM): Tesseract reads those pages, so recto must too.
	_ "recto/ocr/lept"
)
