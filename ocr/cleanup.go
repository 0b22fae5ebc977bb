package ocr

import "image"

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
			if row[x] != 0 {
				x++
				continue
			}
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
	specks, speckPixels   int // components and pixels removed as speckle
	borders, borderPixels int // components and pixels removed as border
	inkPixels             int // ink pixels left
	components            int // components left
}

// cleanup removes, in place, speckle (ink components of at most maxSpeck
// pixels) and border ink (components that touch the image edge and span at
// least a quarter of the page's width or height, as scanner edges, lid
// shadows and the dark strip beyond a page do). runs is scratch space; the
// possibly grown slice is returned for reuse.
func cleanup(b *image.Gray, maxSpeck int, runs []run) (cleanupResult, []run) {
	w, h := b.Rect.Dx(), b.Rect.Dy()
	runs = components(b, runs)
	stats := make(map[int32]*compStats)
	// Roots are the first run of each component, so an ordered slice of
	// stats indexed by root would be as large as runs; most pages have far
	// fewer components than runs, hence the map.
	for _, r := range runs {
		s := stats[r.parent]
		if s == nil {
			s = &compStats{x0: r.x0, y0: r.y, x1: r.x1, y1: r.y + 1}
			stats[r.parent] = s
		}
		s.area += int(r.x1 - r.x0)
		s.x0, s.x1 = min(s.x0, r.x0), max(s.x1, r.x1)
		s.y1 = max(s.y1, r.y+1)
	}
	var res cleanupResult
	remove := make(map[int32]bool)
	for root, s := range stats {
		touches := s.x0 == 0 || s.y0 == 0 || int(s.x1) == w || int(s.y1) == h
		span := int(s.x1-s.x0)*4 >= w || int(s.y1-s.y0)*4 >= h
		switch {
		case s.area <= maxSpeck:
			remove[root] = true
			res.specks++
			res.speckPixels += s.area
		case touches && span:
			remove[root] = true
			res.borders++
			res.borderPixels += s.area
		default:
			res.components++
			res.inkPixels += s.area
		}
	}
	if len(remove) > 0 {
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
