package main

import (
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

func testPassages(t *testing.T) []passage {
	t.Helper()
	ps, err := loadPassages(filepath.Join("..", "..", "testdata", "synth", "passages.jsonl.gz"))
	if err != nil {
		t.Fatal(err)
	}
	return ps
}

func TestPlanDeterministicAndSplit(t *testing.T) {
	ps := testPassages(t)
	a, b := planPages(1000, 7, ps), planPages(1000, 7, ps)
	if !reflect.DeepEqual(a, b) {
		t.Fatal("equal seeds gave different plans")
	}
	if c := planPages(1000, 8, ps); reflect.DeepEqual(a, c) {
		t.Fatal("different seeds gave equal plans")
	}
	fit, kinds, levels := 0, 0, 0
	for _, p := range a {
		if p.Split == "fit" {
			fit++
		}
		if p.Split != splitOf(p.ID) {
			t.Fatalf("page %s: split %q does not follow from its id", p.ID, p.Split)
		}
		if p.Kind == "level" {
			levels++
		} else {
			kinds++
		}
	}
	// 1000 ids split by a hash at 70%: binomial sd is about 14.5 ids, so
	// ±60 is a four-sd band (binomial distribution, common practice).
	if fit < 640 || fit > 760 {
		t.Errorf("%d of 1000 pages in fit, want about 700", fit)
	}
	if kinds < 190 || kinds > 310 {
		t.Errorf("%d named-kind pages of 1000, want about 250", kinds)
	}
	// A page's plan does not depend on how many pages are planned.
	if short := planPages(10, 7, ps); !reflect.DeepEqual(short, a[:10]) {
		t.Error("plans of the first 10 pages change with -n")
	}
}

func TestBuildWritesCorpus(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "c")
	text := filepath.Join("..", "..", "testdata", "synth", "passages.jsonl.gz")
	// 100 dpi keeps the test fast under the race detector.
	if err := runBuild([]string{"-out", out, "-n", "4", "-seed", "3", "-ocr", "off", "-dpi", "100", "-text", text}); err != nil {
		t.Fatal(err)
	}
	man, err := os.ReadFile(filepath.Join(out, "MANIFEST.tsv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(man)), "\n")
	if len(lines) != 5 || !strings.HasPrefix(lines[0], "id\tsplit\tkind\tseverity\tseed\t") {
		t.Fatalf("MANIFEST.tsv:\n%s", man)
	}
	for _, l := range lines[1:] {
		f := strings.Split(l, "\t")
		id, split := f[0], f[1]
		truth, err := os.ReadFile(filepath.Join(out, "truth", split, id+".txt"))
		if err != nil {
			t.Fatal(err)
		}
		if f[2] != "blank" && len(strings.Fields(string(truth))) < 50 {
			t.Errorf("%s: only %d words of truth", id, len(strings.Fields(string(truth))))
		}
		if f[2] == "blank" && len(truth) != 0 {
			t.Errorf("%s: blank page with truth %q", id, truth)
		}
		if _, err := os.Stat(filepath.Join(out, "images", split, id+".png")); err != nil {
			t.Error(err)
		}
	}
	// A second build into the same folder is refused.
	if err := runBuild([]string{"-out", out, "-n", "4", "-ocr", "off", "-text", text}); err == nil {
		t.Error("building over an existing corpus gave no error")
	}
}

func TestPassagesCut(t *testing.T) {
	var b strings.Builder
	b.WriteString("CHAPTER 9. The Heading\n\n")
	for i := 0; i < 40; i++ {
		b.WriteString("One two three four five six seven eight nine ten. ")
		if i%8 == 7 {
			b.WriteString("\n\n")
		}
	}
	got := passages(b.String(), 2)
	if len(got) == 0 {
		t.Fatal("no passages")
	}
	for _, p := range got {
		n := len(strings.Fields(p))
		if n < 60 || n > 200 || strings.Contains(p, "CHAPTER") || !strings.HasSuffix(p, ".") {
			t.Errorf("passage of %d words: %q", n, p)
		}
	}
}

// TestFontTextSplit: with -split fonttext a heldout page has a family and
// a source text that no fit page has, the cells are the declared ones, and
// a page's plan does not depend on -n.
func TestFontTextSplit(t *testing.T) {
	ps := testPassages(t)
	ps = append(ps, passage{Source: "devil/part_1", Text: "ABATIS, n. Rubbish in front of a fort."})
	o := buildOptions{N: 600, Seed: 5, Split: "fonttext", MaxT: 1}
	plans := planFontPages(o, latinFamilies, ps)
	fitFam, fitText := map[string]bool{}, map[string]bool{}
	count := map[string]int{}
	for _, p := range plans {
		count[p.Split]++
		if p.Split == "fit" || p.Split == "incorpus" {
			fitFam[p.Family], fitText[p.Source] = true, true
		}
	}
	for _, p := range plans {
		if p.Split != "heldout" {
			continue
		}
		if fitFam[p.Family] || fitText[p.Source] {
			t.Errorf("heldout page %s: family %q or text %q also in fit", p.ID, p.Family, p.Source)
		}
		if p.Text != "heldout" {
			t.Errorf("heldout page %s: text column %q", p.ID, p.Text)
		}
	}
	// Shares 0.55 (fit and incorpus), 0.30, 0.075, 0.075 of 600 pages:
	// binomial four-sd bands (common practice).
	for _, c := range []struct {
		split  string
		lo, hi int
	}{{"heldout", 135, 225}, {"fontonly", 20, 70}, {"textonly", 20, 70}, {"incorpus", 40, 100}} {
		if n := count[c.split]; n < c.lo || n > c.hi {
			t.Errorf("%d %s pages of 600, want %d-%d", n, c.split, c.lo, c.hi)
		}
	}
	// At least eight training families, and every class among them
	// (issue 12 part 5: serif, sans, a period book face, a typewriter face).
	classes := map[string]bool{}
	for _, f := range latinFamilies {
		if !f.Heldout {
			classes[f.Class] = true
		}
	}
	if len(fitFam) < 8 || len(classes) < 4 {
		t.Errorf("%d training families in use, classes %v; want at least 8 and 4 classes", len(fitFam), classes)
	}
	o.N = 40
	if short := planFontPages(o, latinFamilies, ps); !reflect.DeepEqual(short, plans[:40]) {
		t.Error("plans of the first 40 pages change with -n")
	}
}

// TestFontFamiliesDraw renders a passage in every face of the Debian font
// families (scripts/setup --test installs them) and checks that each can
// draw the English passages' letters and the German letters of the
// Fraktur pages, with plain replacements for quotes and dashes only.
func TestFontFamiliesDraw(t *testing.T) {
	text := testPassages(t)[0].Text + " Straße über Öl Ärger Jäger"
	for _, set := range []string{"debian", "fraktur"} {
		fams, err := fontSet(set)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range fams {
			for style, path := range f.Faces {
				if _, err := drawable(text, path); err != nil {
					t.Errorf("%s %s: %v", f.Name, style, err)
				}
			}
		}
	}
}

// TestSpacePunct: the period's spacing before marks (Leptonica's
// prog/german.png sets "kund , das den , der drein").
func TestSpacePunct(t *testing.T) {
	got := spacePunct("kund, das den, der drein: nur? Ja! 1,5 (so), \"gut\", ...")
	want := "kund , das den , der drein : nur ? Ja ! 1,5 (so), \"gut\", ..."
	if got != want {
		t.Errorf("spacePunct = %q\nwant %q", got, want)
	}
}
