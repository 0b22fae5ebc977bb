package quality

import (
	"encoding/json"
	"os"
	"path/filepath"
)

// SourceTitle names the title of a page lying directly in the folder a
// command was given (no folder in its path) as the README's convention
// names the pages of a collection: after the folder its image lies in (a
// page in the root of the collection harbour-gazette belongs to the title
// harbour-gazette), not after the output or ground-truth folder holding
// its files ("ocr", "truth"). source is the image path its page record
// names; fallback is returned when it names no folder.
func SourceTitle(source, fallback string) string {
	if source == "" {
		return fallback
	}
	b := filepath.Base(filepath.Dir(source))
	if b == "." || b == ".." || b == string(filepath.Separator) || b == "" {
		return fallback
	}
	return b
}

// recordTitle is SourceTitle of the source named by the page record at
// path (the <page>.json recto ocr writes beside <page>.txt); fallback when
// there is no such record or it names no source.
func recordTitle(path, fallback string) string {
	data, err := os.ReadFile(path)
	if err != nil {
		return fallback
	}
	var r struct {
		Source string `json:"source"`
	}
	if json.Unmarshal(data, &r) != nil {
		return fallback
	}
	return SourceTitle(r.Source, fallback)
}
