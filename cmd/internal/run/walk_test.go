package run

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestFindImages: one list of formats for every command (issue 15: recto
// ocr skipped the BMP pages recto run read), hidden entries and the output
// folder skipped, shared stems kept apart, titles named as recto score
// names them.
func TestFindImages(t *testing.T) {
	root := filepath.Join(t.TempDir(), "delivery")
	for _, name := range []string{
		"harbour-gazette/1902/p0001.tif", "harbour-gazette/1902/p0002.BMP", "harbour-gazette/1902/p0003.jp2",
		"reel-07.pdf", "ledger/p1.png", "ledger/p1.tif", "ledger/notes.txt", ".hidden/p9.png", "ledger/.p8.png",
		"out/ocr/p7.png",
	} {
		p := filepath.Join(root, filepath.FromSlash(name))
		os.MkdirAll(filepath.Dir(p), 0o755)
		if err := os.WriteFile(p, []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	imgs, ignored, err := FindImages(root, filepath.Join(root, "out"))
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, im := range imgs {
		got = append(got, im.Title+"|"+im.Stem)
	}
	want := "harbour-gazette|harbour-gazette/1902/p0001 harbour-gazette|harbour-gazette/1902/p0002 harbour-gazette|harbour-gazette/1902/p0003 " +
		"ledger|ledger/p1.png ledger|ledger/p1.tif delivery|reel-07"
	if strings.Join(got, " ") != want {
		t.Errorf("found\n %s\nwant\n %s", strings.Join(got, " "), want)
	}
	if ignored != 1 { // notes.txt
		t.Errorf("%d ignored, want 1 (notes.txt)", ignored)
	}
	if _, _, err := FindImages(filepath.Join(root, "absent"), ""); err == nil {
		t.Error("a missing root gave no error")
	}
}
