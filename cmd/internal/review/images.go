package review

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"image"
	"image/jpeg"
	"os"
	"path/filepath"
	"sync"

	"github.com/disintegration/imaging"

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
// making both images of the page first when missing. Concurrent requests
// for one page wait for one making.
func (c *imageCache) get(ctx context.Context, kind string, src pageSource) ([]byte, error) {
	key := imageKey(src.Rel, src.SHA256)
	for {
		if data, err := os.ReadFile(c.path(kind, key)); err == nil {
			return data, nil
		}
		c.mu.Lock()
		if data, ok := c.mem[kind+key]; ok {
			c.mu.Unlock()
			return data, nil
		}
		if wg, ok := c.pending[key]; ok {
			c.mu.Unlock()
			wg.Wait()
			if _, err := os.Stat(c.path(kind, key)); err != nil {
				c.mu.Lock()
				data, ok := c.mem[kind+key]
				c.mu.Unlock()
				if !ok {
					return nil, fmt.Errorf("review: images of %q could not be made", src.Rel)
				}
				return data, nil
			}
			continue
		}
		wg := &sync.WaitGroup{}
		wg.Add(1)
		c.pending[key] = wg
		c.mu.Unlock()
		thumb, view, err := makeImages(ctx, src)
		if err == nil {
			c.store("thumbs", key, thumb)
			c.store("pages", key, view)
		}
		c.mu.Lock()
		delete(c.pending, key)
		c.mu.Unlock()
		wg.Done()
		if err != nil {
			return nil, err
		}
		if kind == "thumbs" {
			return thumb, nil
		}
		return view, nil
	}
}

// has reports whether both images of src are cached.
func (c *imageCache) has(src pageSource) bool {
	key := imageKey(src.Rel, src.SHA256)
	_, err1 := os.Stat(c.path("thumbs", key))
	_, err2 := os.Stat(c.path("pages", key))
	return err1 == nil && err2 == nil
}

func (c *imageCache) store(kind, key string, data []byte) {
	p := c.path(kind, key)
	if err := os.MkdirAll(filepath.Dir(p), 0o755); err == nil {
		if err := atomicfile.Write(p, data); err == nil {
			return
		}
	}
	c.mu.Lock()
	c.mem[kind+key] = data
	c.mu.Unlock()
}

// pageSource is what is needed to decode one page's image.
type pageSource struct {
	Rel, SHA256 string
	Path        string // checked source image path
	FilePage    int    // page in a multi-page file, from 1; 0 for a single image
}

// makeImages decodes the page once and returns its thumbnail and the
// page image shown, both JPEG.
func makeImages(ctx context.Context, src pageSource) (thumb, view []byte, err error) {
	img, err := decodePage(ctx, src)
	if err != nil {
		return nil, nil, err
	}
	v := img
	if img.Bounds().Dx() > ViewWidth {
		v = shrink(img, ViewWidth)
	}
	if view, err = encodeJPEG(v); err != nil {
		return nil, nil, err
	}
	if thumb, err = encodeJPEG(shrink(v, ThumbWidth)); err != nil {
		return nil, nil, err
	}
	return thumb, view, nil
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

// shrink scales img to width w (height in proportion). A greyscale page,
// nearly every scan, is averaged over whole source pixels in one pass
// (box filter: each target pixel is the mean of the source pixels it
// covers); any other image goes through imaging's box filter.
func shrink(img image.Image, w int) image.Image {
	b := img.Bounds()
	if b.Dx() <= w {
		return img
	}
	h := max(1, (b.Dy()*w+b.Dx()/2)/b.Dx())
	g, ok := img.(*image.Gray)
	if !ok || g.Rect.Min != (image.Point{}) {
		return imaging.Resize(img, w, h, imaging.Box)
	}
	return shrinkGray(g, w, h)
}

// shrinkGray is the area average of g at w×h: target column x covers
// source columns [x·W/w, (x+1)·W/w), likewise for rows.
func shrinkGray(g *image.Gray, w, h int) *image.Gray {
	sw, sh := g.Rect.Dx(), g.Rect.Dy()
	out := image.NewGray(image.Rect(0, 0, w, h))
	x0 := make([]int, w+1)
	for x := 0; x <= w; x++ {
		x0[x] = x * sw / w
	}
	sums := make([]uint32, w)
	for y := 0; y < h; y++ {
		y0, y1 := y*sh/h, (y+1)*sh/h
		if y1 == y0 {
			y1 = y0 + 1
		}
		clear(sums)
		for sy := y0; sy < y1; sy++ {
			row := g.Pix[sy*g.Stride : sy*g.Stride+sw]
			for x := 0; x < w; x++ {
				var s uint32
				for _, v := range row[x0[x]:max(x0[x+1], x0[x]+1)] {
					s += uint32(v)
				}
				sums[x] += s
			}
		}
		dst := out.Pix[y*out.Stride : y*out.Stride+w]
		for x := range dst {
			n := uint32(max(x0[x+1]-x0[x], 1) * (y1 - y0))
			dst[x] = uint8((sums[x] + n/2) / n)
		}
	}
	return out
}
