package runtest

import (
	"bytes"
	"fmt"
	"image"
	"math/rand/v2"
	"os"
	"path"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"golang.org/x/image/tiff"

	"recto/ocr/synth"
)

// Delivery is a seeded generator of awkward but ordinary deliveries: the
// collection and ground truth a library might hand over, and the changes
// between one run and the next. What it makes:
//
//   - page images whose stems repeat across extensions (p.png, p.tif,
//     p.tif.png), with names holding spaces, quotes, a newline, bytes that
//     are not UTF-8 (Latin-1) and markup;
//   - a symlink loop (a folder link to its parent), a symlink to a folder
//     named like an image, a symlink to a page;
//   - zero-byte and truncated files, a page that decodes to 1×60000 pixels;
//   - ground truth for about half the pages, some in Latin-1, one that is a
//     folder;
//   - between runs (Change): pages added, changed, renamed and removed.
//
// Every readable page has pixels of its own and a .fake.txt beside it, so
// the test engine (Engine) reads each page's own words.
type Delivery struct {
	Coll, Truth string
	rng         *rand.Rand
	n           int
	pages       []string // rel of every readable page image written, for changes
}

// NewDelivery writes a delivery of about pages page images (awkward files
// included) into a new temporary folder.
func NewDelivery(t testing.TB, seed uint64, pages int) *Delivery {
	t.Helper()
	dir := t.TempDir()
	d := &Delivery{Coll: filepath.Join(dir, "coll"), Truth: filepath.Join(dir, "truth"), rng: rand.New(rand.NewPCG(seed, 16))}
	titles := max(1, pages/8)
	for i := range pages {
		title := fmt.Sprintf("Title %02d", i%titles)
		d.addPage(t, title, d.name(i))
	}
	t0 := "Title 00"
	// Stems shared across extensions.
	d.addPage(t, t0, "dup.png")
	d.addPage(t, t0, "dup.tif")
	d.addPage(t, t0, "dup.tif.png")
	// Broken files: the scans' fault.
	MustWrite(t, filepath.Join(d.Coll, t0, "zero.png"), nil)
	MustWrite(t, filepath.Join(d.Coll, t0, "truncated.png"), d.png(t, image.NewGray(image.Rect(0, 0, 30, 30)))[:40])
	// A page of 1×60000 pixels: readable, however odd.
	tall := image.NewGray(image.Rect(0, 0, 1, 60000))
	for i := range tall.Pix {
		tall.Pix[i] = uint8(255 - i%7)
	}
	MustWrite(t, filepath.Join(d.Coll, t0, "tall.png"), d.png(t, tall))
	// Symlinks: a loop, a folder named like an image, a page.
	must(t, os.Symlink("..", filepath.Join(d.Coll, t0, "loop")))
	must(t, os.Symlink(filepath.Join(d.Coll, t0), filepath.Join(d.Coll, t0, "folder.png")))
	must(t, os.Symlink(filepath.Join(d.Coll, d.pages[0]), filepath.Join(d.Coll, t0, "alias.png")))
	// Ground truth that is a folder.
	must(t, os.MkdirAll(filepath.Join(d.Truth, t0, "folder truth.txt"), 0o755))
	d.addPage(t, t0, "folder truth.png")
	return d
}

func must(t testing.TB, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}

// name returns the i-th page's file name, awkward one time in three.
func (d *Delivery) name(i int) string {
	ext := []string{".png", ".tif", ".png"}[d.rng.IntN(3)]
	switch d.rng.IntN(9) {
	case 0:
		return fmt.Sprintf("page %d with spaces%s", i, ext)
	case 1:
		return fmt.Sprintf(`quote "%d" it's%s`, i, ext)
	case 2:
		return fmt.Sprintf("new\nline %d%s", i, ext)
	case 3:
		return fmt.Sprintf("latin1-\xe9t\xe9 %d%s", i, ext) // "été" in ISO 8859-1
	case 4:
		return fmt.Sprintf("<b>mark&amp;%d</b>%s", i, ext)
	}
	return fmt.Sprintf("p%04d%s", i, ext)
}

// addPage writes a readable page with pixels of its own, its words, and
// ground truth for about half the pages (one in four of those Latin-1).
func (d *Delivery) addPage(t testing.TB, title, name string) {
	t.Helper()
	rel := path.Join(title, name)
	d.writeImage(t, rel)
	d.pages = append(d.pages, rel)
	if d.rng.IntN(2) == 0 {
		return
	}
	ref := fmt.Sprintf("The ferry log of Wrenmouth, entry %d.\nCargo for Lantern Isle: %d crates.\n", d.n, d.rng.IntN(90))
	stem := strings.TrimSuffix(rel, path.Ext(rel))
	name = filepath.Join(d.Truth, filepath.FromSlash(stem)+".txt")
	if fi, err := os.Stat(name); err == nil && fi.IsDir() {
		return
	}
	data := []byte(ref)
	if d.rng.IntN(4) == 0 {
		data = []byte(strings.ReplaceAll(ref, "e", "\xe9")) // é in ISO 8859-1: not UTF-8
	}
	MustWrite(t, name, data)
}

// writeImage writes (or rewrites) the image at rel with new pixels and
// the words the test engine gives it.
func (d *Delivery) writeImage(t testing.TB, rel string) {
	t.Helper()
	d.n++
	img := image.NewGray(image.Rect(0, 0, 40+d.n%97, 50+d.n/97))
	for i := range img.Pix {
		img.Pix[i] = uint8(150 + (i*31+d.n*7)%100)
	}
	var data []byte
	if strings.HasSuffix(rel, ".tif") {
		var buf bytes.Buffer
		must(t, tiff.Encode(&buf, img, nil))
		data = buf.Bytes()
	} else {
		data = d.png(t, img)
	}
	name := filepath.Join(d.Coll, filepath.FromSlash(rel))
	MustWrite(t, name, data)
	words := fmt.Sprintf("The ferry log of Wrenmouth, entry %d.\nCargo for Lantern Isle: %d crates.\n", d.n, d.rng.IntN(90))
	if d.rng.IntN(3) == 0 {
		words = strings.ReplaceAll(words, "e", "c")
	}
	MustWrite(t, name+FakeSuffix, []byte(words))
}

func (d *Delivery) png(t testing.TB, img image.Image) []byte {
	var buf bytes.Buffer
	must(t, synth.WritePNG(&buf, img, 150))
	return buf.Bytes()
}

// Change makes the changes of one delivery round: a page added, one
// changed, one renamed and one removed (ground truth stays as it is).
// It returns what it did, for messages.
func (d *Delivery) Change(t testing.TB) []string {
	t.Helper()
	var did []string
	if len(d.pages) < 4 {
		return nil
	}
	// Added.
	title := path.Dir(d.pages[d.rng.IntN(len(d.pages))])
	name := d.name(1000 + d.n)
	if _, err := os.Lstat(filepath.Join(d.Coll, title, name)); err != nil {
		d.addPage(t, title, name)
		did = append(did, "added "+path.Join(title, name))
	}
	// Changed (new pixels, new words).
	i := d.rng.IntN(len(d.pages))
	d.writeImage(t, d.pages[i])
	did = append(did, "changed "+d.pages[i])
	// Renamed.
	i = d.rng.IntN(len(d.pages))
	from := d.pages[i]
	to := path.Join(path.Dir(from), "renamed "+fmt.Sprint(d.n)+" "+path.Base(from))
	for _, suf := range []string{"", FakeSuffix} {
		must(t, os.Rename(filepath.Join(d.Coll, filepath.FromSlash(from))+suf, filepath.Join(d.Coll, filepath.FromSlash(to))+suf))
	}
	d.pages[i] = to
	did = append(did, "renamed "+from)
	// Removed (never pages[0], which a symlink points to).
	if i = 1 + d.rng.IntN(len(d.pages)-1); true {
		gone := d.pages[i]
		for _, suf := range []string{"", FakeSuffix} {
			must(t, os.Remove(filepath.Join(d.Coll, filepath.FromSlash(gone))+suf))
		}
		d.pages = append(d.pages[:i], d.pages[i+1:]...)
		did = append(did, "removed "+gone)
	}
	sort.Strings(did)
	return did
}
