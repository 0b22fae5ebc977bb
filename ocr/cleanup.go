package ocr

import (
	"bytes"
	"image"
)

// run is a horizontal run of ink pixels [x0, x1) in row y.
type run struct {
	y, x0, x1 int32
	parent    int32
}

// components labels the 8-connected ink (0) components of a binary image by
// union-find over runs (one pass over the rows, each run joined to the runs
// of the previous row it touches), and returns the runs with each run's root
// index in parent after path compression.
func components(b *image.Gray, runs []run) []run {
	w, h := b.Rect.Dx(), b.Rect.Dy()
	runs = runs[:0]
	prevStart, prevEnd := 0, 0
	for y := 0; y < h; y++ {
		row := b.Pix[y*b.Stride : y*b.Stride+w]
		start := len(runs)
		for x := 0; x < w; {
			// Skip paper to the next ink pixel (bytes.IndexByte is
			// vectorised: most of a page is paper).
			i := bytes.IndexByte(row[x:], 0)
			if i < 0 {
				break
			}
			x += i
			x0 := x
			for x < w && row[x] == 0 {
				x++
			}
			runs = append(runs, run{y: int32(y), x0: int32(x0), x1: int32(x), parent: int32(len(runs))})
		}
		// Join with the previous row: runs overlap 8-connectedly when
		// [x0-1, x1] intersects [p.x0, p.x1).
		j := prevStart
		for i := start; i < len(runs); i++ {
			r := runs[i]
			for j < prevEnd && runs[j].x1 < r.x0 {
				j++
			}
			for k := j; k < prevEnd && runs[k].x0 <= r.x1; k++ {
				union(runs, int32(i), int32(k))
			}
		}
		prevStart, prevEnd = start, len(runs)
	}
	for i := range runs {
		runs[i].parent = find(runs, int32(i))
	}
	return runs
}

func find(runs []run, i int32) int32 {
	for runs[i].parent != i {
		runs[i].parent = runs[runs[i].parent].parent
		i = runs[i].parent
	}
	return i
}

func union(runs []run, a, b int32) {
	ra, rb := find(runs, a), find(runs, b)
	if ra == rb {
		return
	}
	if ra < rb {
		runs[rb].parent = ra
	} else {
		runs[ra].parent = rb
	}
}

// compStats accumulates the size and bounding box of a component.
type compStats struct {
	area           int
	x0, y0, x1, y1 int32 // bounding box, x1 and y1 exclusive
}

// cleanupResult says what cleanup removed.
type cleanupResult struct {
	maxSpeck              int  // largest component removed as speckle, pixels
	specks, speckPixels   int  // components and pixels removed as speckle
	borders, borderPixels int  // components and pixels removed as border
	inkPixels             int  // ink pixels left
	components            int  // components left, specks kept aside
	specksKept            bool // speckle was counted but left in place (too little of it: see clean)
}

// cleanup removes, in place, speckle and border ink from a binary image.
//
// Speckle is an ink component of at most max(2, (m/10)²) pixels, m being the
// median height of the components at least 3 pixels tall — about the
// x-height of the text, whatever the resolution. At 300 dpi with 11-point
// text (m ≈ 25) that removes specks of up to 4 pixels; a full stop is about
// 25.
//
// Border ink is a component that touches the image edge and spans at least
// a quarter of the page's width or height, as scanner edges, lid shadows
// and the dark strip beyond a page do.
//
// runs is scratch space; the possibly grown slice is returned for reuse.
func cleanup(b *image.Gray, runs []run) (cleanupResult, []run) {
	return clean(b, runs, 0)
}

// clean is cleanup, except that speckle is removed only when it makes up at
// least a fraction dust of the ink (speckle and other components, border
// ink aside); 0 removes it always. A page with less speckle than that keeps
// it (res.specks and res.speckPixels still count it, res.specksKept says it
// was kept).
func clean(b *image.Gray, runs []run, dust float64) (cleanupResult, []run) {
	w, h := b.Rect.Dx(), b.Rect.Dy()
	runs = components(b, runs)
	stats, roots := componentStats(runs)
	var hist [256]int
	n := 0
	for _, root := range roots {
		if hgt := stats[root].y1 - stats[root].y0; hgt >= 3 {
			hist[min(255, hgt)]++
			n++
		}
	}
	var res cleanupResult
	res.maxSpeck = 2
	if n > 0 {
		m := percentile(&hist, n, 0.5)
		res.maxSpeck = max(2, (m/10)*(m/10))
	}
	remove := make([]bool, len(runs))
	any := false
	for _, root := range roots {
		s := &stats[root]
		touches := s.x0 == 0 || s.y0 == 0 || int(s.x1) == w || int(s.y1) == h
		span := int(s.x1-s.x0)*4 >= w || int(s.y1-s.y0)*4 >= h
		switch {
		case s.area <= res.maxSpeck:
			remove[root], any = true, true
			res.specks++
			res.speckPixels += s.area
		case touches && span:
			remove[root], any = true, true
			res.borders++
			res.borderPixels += s.area
		default:
			res.components++
			res.inkPixels += s.area
		}
	}
	if dust > 0 && float64(res.speckPixels) < dust*float64(res.speckPixels+res.inkPixels) && res.specks > 0 {
		res.specksKept = true
		any = res.borders > 0
		for _, root := range roots {
			if s := &stats[root]; s.area <= res.maxSpeck {
				remove[root] = false
			}
		}
	}
	if any {
		for _, r := range runs {
			if remove[r.parent] {
				row := b.Pix[int(r.y)*b.Stride:]
				for x := r.x0; x < r.x1; x++ {
					row[x] = 255
				}
			}
		}
	}
	return res, runs
}

// componentStats gathers the box and area of every component of runs, as
// components labelled them. A component's root is its first run (the lowest
// index), so stats is indexed by run and holds a component's figures at its
// root; roots lists the roots in the order of their first runs.
func componentStats(runs []run) (stats []compStats, roots []int32) {
	stats = make([]compStats, len(runs))
	for i, r := range runs {
		s := &stats[r.parent]
		if int32(i) == r.parent {
			*s = compStats{x0: r.x0, y0: r.y, x1: r.x1, y1: r.y + 1}
			roots = append(roots, r.parent)
		}
		s.area += int(r.x1 - r.x0)
		s.x0, s.x1 = min(s.x0, r.x0), max(s.x1, r.x1)
		s.y1 = max(s.y1, r.y+1)
	}
	return stats, roots
}
