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
