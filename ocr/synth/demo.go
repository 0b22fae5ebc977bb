package synth

import (
	"embed"
	"fmt"
	"strings"
)

//go:embed demotext/*.txt
var demoFS embed.FS

// Title is one title of the demo collection: a run of pages of one
// publication of the fictional town of Pellingfold, with the degradation
// each page is to be "scanned" with.
type Title struct {
	Name   string   // display name, e.g. "The Pellingfold Parish Lantern"
	ID     string   // short name safe for folder names, e.g. "lantern-1897"
	Layout Layout   // page and type of the title
	Pages  []string // the text of each page; "" for a blank page
	Kinds  []Kind   // how each page is degraded, Seed set; same length as Pages
}

// demoTitles fixes the order, names, layouts and page degradations of the
// demo; the texts come from demotext/<file>.
var demoTitles = []struct {
	file, id string
	layout   Layout
	kinds    []string // a Kinds name, or "level:t"
	blankEnd bool     // a blank page follows the text pages
}{
	{"lantern.txt", "lantern-1897", Layout{WidthMM: 148, HeightMM: 210, MarginMM: 16, FontSizePt: 11},
		[]string{"clean", "clean", "skewed", "noisy", "level:0.35", "faded", "uneven", "level:0.55"}, false},
	{"proceedings.txt", "proceedings-1896", Layout{WidthMM: 148, HeightMM: 210, MarginMM: 16, FontSizePt: 10.5, Font: "medium"},
		[]string{"clean", "lowres", "worn", "level:0.2", "skewed", "level:0.45", "bleeding", "level:0.75"}, false},
	{"gazette.txt", "gazette-1897", Layout{WidthMM: 148, HeightMM: 210, MarginMM: 14, FontSizePt: 10, Font: "mono"},
		[]string{"clean", "noisy", "uneven", "level:0.3", "lowres", "level:0.6", "worn", "level:0.9", "blank"}, true},
}

// Demo returns the demo collection: three fictional titles of eight pages
// each (the last title has a ninth, blank page), written for this project,
// with page degradations that run from clean through the named kinds to
// severe mixed levels. The result is freshly built on every call.
func Demo() []Title {
	var out []Title
	for ti, dt := range demoTitles {
		data, err := demoFS.ReadFile("demotext/" + dt.file)
		if err != nil {
			panic("synth: demo text missing: " + err.Error()) // embedded; cannot happen in a built binary
		}
		name, pages := parseDemo(string(data))
		if dt.blankEnd {
			pages = append(pages, "")
		}
		if len(pages) != len(dt.kinds) {
			panic(fmt.Sprintf("synth: demo %s has %d pages and %d degradations", dt.file, len(pages), len(dt.kinds)))
		}
		t := Title{Name: name, ID: dt.id, Layout: dt.layout, Pages: pages}
		for pi, k := range dt.kinds {
			seed := uint64(1000*(ti+1) + pi + 1)
			var kind Kind
			if sev, ok := strings.CutPrefix(k, "level:"); ok {
				var v float64
				fmt.Sscan(sev, &v)
				kind = Kind{Name: "level-" + sev, D: Level(v, seed)}
			} else {
				var found bool
				if kind, found = KindByName(k); !found {
					panic("synth: demo uses unknown kind " + k)
				}
				kind.D.Seed = seed
			}
			t.Kinds = append(t.Kinds, kind)
		}
		out = append(out, t)
	}
	return out
}

// parseDemo reads a demo text file: a first line "# Title name", then
// pages separated by lines holding only "----".
func parseDemo(s string) (name string, pages []string) {
	first, rest, _ := strings.Cut(s, "\n")
	name = strings.TrimSpace(strings.TrimPrefix(first, "#"))
	for _, p := range strings.Split(rest, "\n----\n") {
		pages = append(pages, strings.TrimSpace(p))
	}
	return name, pages
}

// Page renders page i (from 0) of the title with the title's layout and
// degrades it with Kinds[i]. It returns an error when i is out of range or
// the text does not fit the page (the demo texts all fit).
func (t Title) Page(i int) (*Page, error) {
	if i < 0 || i >= len(t.Pages) {
		return nil, fmt.Errorf("synth: %s has no page %d", t.ID, i)
	}
	p, rest, err := Render(t.Pages[i], t.Layout)
	if err != nil {
		return nil, err
	}
	if rest != "" {
		return nil, fmt.Errorf("synth: %s page %d: text does not fit the page", t.ID, i+1)
	}
	return Degrade(p, t.Kinds[i].D), nil
}
