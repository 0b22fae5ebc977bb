package main

import (
	"fmt"
	"hash/fnv"
	"math/rand/v2"
	"sort"
	"strings"
	"unicode"

	"recto/ocr/synth"
)

// Shares of the page cells of -split fonttext: pages whose family and
// source text are both in training (split fit, or incorpus for the fifth
// of them held out by the page id), both held out (heldout), or one of the
// two held out (fontonly: a held-out family on a training text; textonly:
// a training family on a held-out text). Our own choice, so that the
// held-out cell has about as many pages as the in-corpus one needs.
const (
	shareTrain    = 0.55
	shareHeldout  = 0.30
	shareFontOnly = 0.075
)

// heldoutText reports whether a passage source is held out of training by
// -split fonttext: the whole of the Devil's Dictionary (a period and a
// kind of text the other sources lack), and every fourth chapter, address
// or file of the others by a hash of its name.
func heldoutText(source string) bool {
	if strings.HasPrefix(source, "devil/") {
		return true
	}
	h := fnv.New32a()
	h.Write([]byte(source))
	return h.Sum32()%4 == 0
}

// inCorpus reports whether a page of the training cell is held out by its
// id (one in five), for the in-corpus figure.
func inCorpus(id string) bool {
	h := fnv.New32a()
	h.Write([]byte("incorpus/" + id))
	return h.Sum32()%5 == 0
}

// planFontPages plans pages set in the families fams. Each page's plan
// follows from the seed and the pages before it, never from -n. With
// -split id every family and passage may go anywhere and the split is the
// page id's hash, as the Go-font corpus; with -split fonttext the page's
// cell is drawn first, then a family and a passage of that cell.
func planFontPages(o buildOptions, fams []family, ps []passage) []pagePlan {
	r := rand.New(rand.NewPCG(o.Seed, 0xf0a7))
	var trainP, heldP, allP []int
	for _, i := range r.Perm(len(ps)) {
		allP = append(allP, i)
		if heldoutText(ps[i].Source) {
			heldP = append(heldP, i)
		} else {
			trainP = append(trainP, i)
		}
	}
	var trainF, heldF []family
	for _, f := range fams {
		if f.Heldout {
			heldF = append(heldF, f)
		} else {
			trainF = append(trainF, f)
		}
	}
	kinds := synth.Kinds()
	next := map[string]int{}
	take := func(name string, list []int) int {
		if len(list) == 0 {
			list, name = allP, "all"
		}
		k := next[name]
		next[name]++
		return list[k%len(list)]
	}
	plans := make([]pagePlan, o.N)
	for i := range plans {
		pr := rand.New(rand.NewPCG(splitmix64(o.Seed^uint64(i)<<20), uint64(i)^0xf0a7))
		p := pagePlan{ID: fmt.Sprintf("s%05d", i), Seed: splitmix64(o.Seed*1_000_003 + uint64(i))}
		var fset []family
		if o.Split == "id" {
			p.Split, fset = splitOf(p.ID), fams
			p.Passage = take("all", allP)
		} else if o.Split == "heldout" {
			// A test corpus: every page in the held-out families, every
			// text taken as held out (a language no model was trained on).
			p.Split, fset = "heldout", heldF
			p.Passage = take("all", allP)
		} else {
			u := pr.Float64()
			heldFont, heldText := false, false
			switch {
			case u < shareTrain:
			case u < shareTrain+shareHeldout:
				heldFont, heldText = true, true
			case u < shareTrain+shareHeldout+shareFontOnly:
				heldFont = true
			default:
				heldText = true
			}
			fset = trainF
			if heldFont && len(heldF) > 0 {
				fset = heldF
			}
			if heldText {
				p.Passage = take("held", heldP)
			} else {
				p.Passage = take("train", trainP)
			}
			switch {
			case heldFont && heldText:
				p.Split = "heldout"
			case heldFont:
				p.Split = "fontonly"
			case heldText:
				p.Split = "textonly"
			case inCorpus(p.ID):
				p.Split = "incorpus"
			default:
				p.Split = "fit"
			}
		}
		p.Source = ps[p.Passage].Source
		p.Text = "train"
		if heldoutText(p.Source) || o.Split == "heldout" {
			p.Text = "heldout"
		}
		f := fset[pr.IntN(len(fset))]
		style, file := f.face(pr.IntN(100))
		p.Family, p.Font, p.FontFile = f.Name, f.Name+" "+style, file
		p.SizePt = 10 + 0.5*float64(pr.IntN(5))
		p.Spaced = pr.Float64() < o.Spaced
		if pr.Float64() < kindShare {
			k := kinds[pr.IntN(len(kinds))]
			p.Kind, p.Severity, p.D, p.Blank = k.Name, -1, k.D, k.Blank
			p.D.Seed = p.Seed
		} else {
			t := pr.Float64() * o.MaxT
			p.Kind, p.Severity, p.D = "level", t, synth.Level(t, p.Seed)
		}
		plans[i] = p
	}
	return plans
}

// splitsOf lists the splits the plans use, fit and heldout always.
func splitsOf(plans []pagePlan) []string {
	seen := map[string]bool{"fit": true, "heldout": true}
	for _, p := range plans {
		seen[p.Split] = true
	}
	var out []string
	for s := range seen {
		out = append(out, s)
	}
	sort.Strings(out)
	return out
}

// drawable returns text with the marks a face lacks replaced by plain ones
// (low and curly quotes by straight ones, dashes by a hyphen), and an error
// naming the characters when letters are still missing: the truth must be
// what the page shows.
func drawable(text, font string) (string, error) {
	miss, err := synth.Missing(text, font)
	if err != nil || len(miss) == 0 {
		return text, err
	}
	plain := map[rune]string{'„': `"`, '“': `"`, '”': `"`, '«': `"`, '»': `"`, '‚': "'", '‘': "'", '’': "'", '‹': "'", '›': "'", '–': "-", '—': "-", '…': "..."}
	var pairs []string
	for _, r := range miss {
		if s, ok := plain[r]; ok {
			pairs = append(pairs, string(r), s)
		}
	}
	if len(pairs) > 0 {
		text = strings.NewReplacer(pairs...).Replace(text)
	}
	if miss, err = synth.Missing(text, font); err != nil || len(miss) > 0 {
		return "", fmt.Errorf("font %q cannot draw %q", font, string(miss))
	}
	return text, nil
}

// spacePunct sets a space before every , ; : ? ! that follows a letter
// (not a digit: "1,5" stays), as German and French print of the 18th and 19th centuries often
// did ("kund , das den , der drein", Leptonica's prog/german.png; common
// practice of the period, from memory).
func spacePunct(text string) string {
	var b strings.Builder
	b.Grow(len(text) + len(text)/20)
	var prev rune
	for _, r := range text {
		if strings.ContainsRune(",;:?!", r) && unicode.IsLetter(prev) {
			b.WriteByte(' ')
		}
		b.WriteRune(r)
		prev = r
	}
	return b.String()
}
