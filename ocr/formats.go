package ocr

import (
	"path/filepath"
	"strings"
)

// pageExts are the file name extensions of page files, lower case: the
// formats DecodeFile and OpenPages read (JPEG 2000 and the TIFF and PNM
// variants Go cannot decode need the engine build, which says so per file).
var pageExts = []string{".bmp", ".gif", ".j2k", ".jp2", ".jpeg", ".jpg", ".pbm", ".pdf", ".pgm", ".png", ".pnm", ".ppm", ".tif", ".tiff", ".webp"}

// IsPageFile reports whether name's extension (any case) is that of a page
// file: the one list every recto command that searches a folder uses.
func IsPageFile(name string) bool {
	ext := strings.ToLower(filepath.Ext(name))
	for _, e := range pageExts {
		if e == ext {
			return true
		}
	}
	return false
}

// PageExtensions returns the extensions IsPageFile accepts, sorted, for
// help texts and messages.
func PageExtensions() []string { return append([]string(nil), pageExts...) }
