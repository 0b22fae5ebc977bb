package review

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"image"
	"image/jpeg"
	"io"
	"os"
	"path/filepath"
	"sync"

	"recto/cmd/internal/run/report"
	"recto/internal/atomicfile"
	"recto/ocr"
)

// Sizes of the images made from a page's source.
const (
	ThumbWidth = 240  // thumbnail width, pixels
	ViewWidth  = 2000 // largest width of the page image shown; smaller pages keep their size
	jpegQual   = 82
)

// cacheDir is the folder in the run folder that holds the thumbnails and
// page images made by recto review.
const cacheDir = "review"

// imageCache makes and keeps the JPEG thumbnails and page images.
type imageCache struct {
	dir string // absolute RUNDIR/review

	mu      sync.Mutex
	pending map[string]*sync.WaitGroup // key -> making in progress
	mem     map[string][]byte          // made but could not be written (read-only run folder)
}

func newImageCache(runDir string) *imageCache {
	return &imageCache{dir: filepath.Join(runDir, cacheDir), pending: map[string]*sync.WaitGroup{}, mem: map[string][]byte{}}
}

// key names the images of one page input: its ledger key and input hash,
// so a new scan gets new images.
func imageKey(rel, sha string) string {
	s := sha256.Sum256([]byte(rel + "\x00" + sha))
	return hex.EncodeToString(s[:16])
}

func (c *imageCache) path(kind, key string) string {
	return filepath.Join(c.dir, kind, key[:2], key+".jpg")
}

// get returns the cached image of kind ("thumbs" or "pages") for src,
// making it first when missing. Concurrent requests for one image wait
// for one making.
func (c *imageCache) get(ctx context.Context, kind string, src pageSource) ([]byte, error) {
	key := imageKey(src.Rel, src.SHA256)
	id := kind + "/" + key
	for {
		if data, err := os.ReadFile(c.path(kind, key)); err == nil {
			return data, nil
		}
		c.mu.Lock()
		if data, ok := c.mem[id]; ok {
			c.mu.Unlock()
			return data, nil
		}
		if wg, ok := c.pending[id]; ok {
			c.mu.Unlock()
			wg.Wait()
			if _, err := os.Stat(c.path(kind, key)); err != nil {
				c.mu.Lock()
				data, ok := c.mem[id]
				c.mu.Unlock()
				if !ok {
					return nil, fmt.Errorf("review: the image of %q could not be made", src.Rel)
				}
				return data, nil
			}
			continue
		}
		wg := &sync.WaitGroup{}
		wg.Add(1)
		c.pending[id] = wg
		c.mu.Unlock()
		width := ThumbWidth
		if kind == "pages" {
			width = ViewWidth
		}
		data, err := makeImage(ctx, src, width)
		if err == nil {
			c.store(kind, key, data)
		}
		c.mu.Lock()
		delete(c.pending, id)
		c.mu.Unlock()
		wg.Done()
		return data, err
	}
}

// has reports whether the image of kind for src is cached.
func (c *imageCache) has(kind string, src pageSource) bool {
	_, err := os.Stat(c.path(kind, imageKey(src.Rel, src.SHA256)))
	return err == nil
}

func (c *imageCache) store(kind, key string, data []byte) {
	p := c.path(kind, key)
	if err := os.MkdirAll(filepath.Dir(p), 0o755); err == nil {
		if err := atomicfile.Write(p, data); err == nil {
			return
		}
	}
	c.mu.Lock()
	c.mem[kind+"/"+key] = data
	c.mu.Unlock()
}

// pageSource is what is needed to decode one page's image.
type pageSource struct {
	Rel, SHA256 string
	Path        string // checked source image path
	FilePage    int    // page in a multi-page file, from 1; 0 for a single image
	// Direct is the content type when the source itself can be shown
	// (a single PNG or JPEG page of at most maxDirect pixels); "" when
	// a rendition must be made. The page shows it with CSS
	// image-orientation: none, in its stored pixels as recto decodes it
	// (an EXIF orientation is not applied), so the boxes fit.
	Direct string
}

// maxDirect bounds the pixels of a source shown as it is (A4 at 400 dpi
// is 15.6 million).
const maxDirect = 16_000_000

// directType returns the content type of a PNG or JPEG file, "" for any
// other.
func directType(name string) string {
	f, err := os.Open(name)
	if err != nil {
		return ""
	}
	defer f.Close()
	var head [8]byte
	n, _ := io.ReadFull(f, head[:])
	switch {
	case n == 8 && string(head[:]) == "\x89PNG\r\n\x1a\n":
		return "image/png"
	case n >= 3 && head[0] == 0xff && head[1] == 0xd8 && head[2] == 0xff:
		return "image/jpeg"
	}
	return ""
}

// makeImage decodes the page and returns it scaled to width w (or less
// when smaller) as JPEG.
func makeImage(ctx context.Context, src pageSource, w int) ([]byte, error) {
	img, err := decodePage(ctx, src)
	if err != nil {
		return nil, err
	}
	return encodeJPEG(shrink(img, w))
}

func decodePage(ctx context.Context, src pageSource) (image.Image, error) {
	if src.FilePage == 0 {
		d, err := ocr.DecodeFile(src.Path, ocr.DecodeOptions{})
		if err != nil {
			return nil, err
		}
		return d.Image, nil
	}
	pf, err := ocr.OpenPages(ctx, src.Path, ocr.DecodeOptions{})
	if err != nil {
		return nil, err
	}
	defer pf.Close()
	d, err := pf.Page(ctx, src.FilePage)
	if err != nil {
		return nil, err
	}
	return d.Image, nil
}

func encodeJPEG(img image.Image) ([]byte, error) {
	var buf bytes.Buffer
	if err := jpeg.Encode(&buf, img, &jpeg.Options{Quality: jpegQual}); err != nil {
		return nil, fmt.Errorf("review: %w", err)
	}
	return buf.Bytes(), nil
}

// shrink scales img to width w (height in proportion) with the report's
// area average (report.Shrink); an image no wider than w keeps its size.
func shrink(img image.Image, w int) image.Image {
	b := img.Bounds()
	if b.Dx() <= w {
		return img
	}
	return report.Shrink(img, w, max(1, (b.Dy()*w+b.Dx()/2)/b.Dx()))
}
