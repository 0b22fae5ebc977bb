// Command traincorrect trains the corrector's error model and measures the
// corrector on a corpus laid out as `go run ./cmd/corpus` writes it
// (DIR/truth/{fit,heldout}/<id>.txt, DIR/ocr/{fit,heldout}/<id>.{txt,json},
// DIR/MANIFEST).
//
//	go run ./tools/traincorrect -corpus /work/corpus -out correct/default.model
//	go run ./tools/traincorrect -corpus /work/corpus -eval
//	go run ./tools/traincorrect -plant /work/data/moby/package/data -out m.model
//
// -plant trains on open text with confusions planted by correcttest, for
// use before a recognised corpus exists.
package main

import (
	"flag"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime/pprof"
	"sort"
	"strings"

	"recto/correct"
	"recto/correct/correcttest"
	"recto/lexicon"
)

func main() {
	corpus := flag.String("corpus", "", "corpus directory (truth/ and ocr/ with fit and heldout splits); for training, several comma-separated")
	plant := flag.String("plant", "", "directory of clean .txt files to plant confusions in (instead of -corpus)")
	out := flag.String("out", "", "write the trained model here")
	eval := flag.Bool("eval", false, "measure the corrector on the heldout split of -corpus (or on planted text)")
	modelPath := flag.String("model", "", "model to evaluate (default: the embedded one)")
	lexFlag := flag.String("lexicon", "default", "lexicon: \"default\" (embedded), \"fair\" (rebuilt like the default but without the texts of -corpus heldout pages), or a file")
	dataDir := flag.String("data", "/work/data", "-lexicon fair: directory holding moby/ and sotu/ (npm packages)")
	margin := flag.Float64("margin", 0, "correction margin (0 = default)")
	rate := flag.Float64("rate", 0.08, "-plant: share of words given a confusion")
	verbose := flag.Bool("v", false, "list every change on clean pages")
	flag.StringVar(&dumpDir, "dump", "", "-eval: write each corrected page here as <id>.txt")
	flag.BoolVar(&normOpts.PlainTypography, "plain", false, "-eval: compare with quality's PlainTypography normalisation (curly quotes, dashes as plain)")
	cpuprofile := flag.String("cpuprofile", "", "write a CPU profile of the evaluation here")
	split := flag.String("split", "heldout", "-eval: pages to measure: \"heldout\", \"dev\" (the development fifth of fit, left out of training), or any other split of the corpus (-split fonttext: incorpus, fontonly, textonly)")
	truthDir := flag.String("truth", "", "-eval: measure the pages with ground truth under this directory instead of -corpus (OCR under -ocr)")
	ocrDir := flag.String("ocr", "", "-eval with -truth: directory of the OCR records (.json) or text, same relative paths")
	final := flag.Bool("final", false, "train on all of fit, development pages included (once the constants are set on dev)")
	guard := flag.Bool("guard", false, "-eval: also correct the full source texts of the -corpus heldout pages as clean plain text (use with -lexicon fair, which leaves them out)")
	merge := flag.String("merge", "", "merge these comma-separated model files (\"default\": the embedded one) into -out, as if trained on all their pages (correct.MergeModels)")
	alsoSplits := flag.String("also", "", "training: also the pages of these comma-separated splits (e.g. fontonly,textonly,incorpus of a -split fonttext corpus)")
	minCount := flag.Int("min-count", 0, "training: drop confusions of three or more characters seen fewer times (0 = the default, 2)")
	keepGlyphs := flag.Bool("map-glyphs", false, "-eval: map punctuation glyphs as the model learned (Config.MapGlyphs)")
	flag.Parse()
	if *cpuprofile != "" {
		f, err := os.Create(*cpuprofile)
		check(err)
		check(pprof.StartCPUProfile(f))
		defer pprof.StopCPUProfile()
	}

	switch {
	case *merge != "":
		var m *correct.Model
		for _, f := range strings.Split(*merge, ",") {
			x := correct.DefaultModel()
			if f != "default" {
				var err error
				x, err = correct.LoadModel(f)
				check(err)
			}
			if m == nil {
				m = x
			} else {
				m = correct.MergeModels(m, x)
			}
		}
		report(m)
		if *out != "" {
			check(m.Save(*out))
		}
	case *corpus != "" && !*eval:
		split := "fit"
		if *final {
			split = "fit+dev"
		}
		var pairs []correct.Pair
		for _, dir := range strings.Split(*corpus, ",") {
			p, err := corpusPairs(dir, split)
			check(err)
			pairs = append(pairs, p...)
			for _, more := range strings.Split(*alsoSplits, ",") {
				if more == "" {
					continue
				}
				p, err := corpusPairs(dir, more)
				check(err)
				pairs = append(pairs, p...)
			}
		}
		fmt.Fprintf(os.Stderr, "training on %d pages (%s, also %q)\n", len(pairs), split, *alsoSplits)
		m := correct.Train(pairs, correct.TrainOptions{Prior: correct.Classic, MinCount: *minCount})
		report(m)
		if *out != "" {
			check(m.Save(*out))
		}
	case *plant != "" && !*eval:
		pairs, err := plantedPairs(*plant, *rate, 0, 2)
		check(err)
		m := correct.Train(pairs, correct.TrainOptions{})
		report(m)
		if *out != "" {
			check(m.Save(*out))
		}
	case *eval:
		m := correct.DefaultModel()
		if *modelPath != "" {
			var err error
			m, err = correct.LoadModel(*modelPath)
			check(err)
		}
		lex, err := loadLexicon(*lexFlag, *corpus, *dataDir)
		check(err)
		c := correct.New(lex, m, correct.Config{Margin: *margin, MapGlyphs: *keepGlyphs})
		switch {
		case *truthDir != "":
			check(evalDirs(c, *truthDir, *ocrDir, nil, *verbose))
		case *corpus != "":
			check(evalCorpus(c, *corpus, *split, *verbose))
			if *guard {
				names, err := heldoutSources(*corpus, *dataDir)
				check(err)
				check(guardText(c, names, *verbose))
			}
		default:
			pairs, err := plantedPairs(*plant, *rate, 1, 2)
			check(err)
			evalPairs(c, pairs)
		}
	default:
		flag.Usage()
		os.Exit(2)
	}
}

func check(err error) {
	if err != nil {
		fmt.Fprintln(os.Stderr, "traincorrect:", err)
		pprof.StopCPUProfile()
		os.Exit(1)
	}
}

func report(m *correct.Model) {
	fmt.Fprintf(os.Stderr, "trained on %d pairs, %d reference characters, %d rules\n", m.Pairs(), m.Chars(), len(m.Rules()))
	for i, r := range m.Rules() {
		if i == 25 {
			break
		}
		fmt.Fprintf(os.Stderr, "  %q -> %q  %d  p=%.4g\n", r.From, r.To, r.N, m.Prob(r.From, r.To))
	}
}

// plantedPairs reads the .txt files of dir, in name order, and keeps those
// whose index modulo mod equals part, with confusions planted.
func plantedPairs(dir string, rate float64, part, mod int) ([]correct.Pair, error) {
	names, err := filepath.Glob(filepath.Join(dir, "*.txt"))
	if err != nil || len(names) == 0 {
		return nil, fmt.Errorf("no .txt files in %q", dir)
	}
	sort.Strings(names)
	rng := rand.New(rand.NewPCG(1, uint64(part)))
	var pairs []correct.Pair
	for i, n := range names {
		if i%mod != part {
			continue
		}
		data, err := os.ReadFile(n)
		if err != nil {
			return nil, err
		}
		ref := wrap(string(data), 70)
		pairs = append(pairs, correct.Pair{Ref: ref, Hyp: correcttest.Plant(ref, rate, correcttest.Confusions, rng)})
	}
	return pairs, nil
}

// wrap breaks running text into lines of about width characters.
func wrap(s string, width int) string {
	var b strings.Builder
	for _, para := range strings.Split(s, "\n") {
		n := 0
		for _, w := range strings.Fields(para) {
			if n > 0 && n+1+len(w) > width {
				b.WriteByte('\n')
				n = 0
			} else if n > 0 {
				b.WriteByte(' ')
				n++
			}
			b.WriteString(w)
			n += len(w)
		}
		if n > 0 {
			b.WriteByte('\n')
		}
	}
	return b.String()
}

// corpusPairs returns the pages of a split; "fit" leaves out the
// development pages, "fit+dev" is all of fit.
func corpusPairs(dir, split string) ([]correct.Pair, error) {
	withDev := split == "fit+dev"
	if withDev {
		split = "fit"
	}
	names, err := filepath.Glob(filepath.Join(dir, "truth", split, "*.txt"))
	if err != nil || len(names) == 0 {
		return nil, fmt.Errorf("no ground truth in %q", filepath.Join(dir, "truth", split))
	}
	sort.Strings(names)
	var pairs []correct.Pair
	for _, n := range names {
		if split == "fit" && !withDev && isDev(strings.TrimSuffix(filepath.Base(n), ".txt")) {
			continue
		}
		ref, err := os.ReadFile(n)
		if err != nil {
			return nil, err
		}
		hyp, err := os.ReadFile(filepath.Join(dir, "ocr", split, filepath.Base(n)))
		if err != nil {
			fmt.Fprintln(os.Stderr, "skipping:", err)
			continue
		}
		pairs = append(pairs, correct.Pair{Ref: string(ref), Hyp: string(hyp)})
	}
	return pairs, nil
}

// loadLexicon returns the embedded lexicon, a lexicon file, or ("fair")
// one rebuilt as lexicon/data/SOURCES.md says but leaving out the source
// texts of the corpus's heldout pages, so that the context model has not
// seen the pages it is measured on.
func loadLexicon(which, corpus, data string) (*lexicon.Lexicon, error) {
	switch which {
	case "default":
		return lexicon.Default(), nil
	case "fair":
	default:
		// One file, or several comma-separated, merged (as --lang frk
		// merges deu and deu-1901).
		var lexs []*lexicon.Lexicon
		for _, f := range strings.Split(which, ",") {
			l, err := lexicon.Load(f)
			if err != nil {
				return nil, err
			}
			lexs = append(lexs, l)
		}
		if len(lexs) == 1 {
			return lexs[0], nil
		}
		return lexicon.Merge(lexs...), nil
	}
	held := map[string]bool{}
	if corpus != "" {
		rows, err := manifest(corpus)
		if err != nil {
			return nil, err
		}
		for _, r := range rows {
			if heldText(r) {
				held[r["source"]] = true
			}
		}
	}
	b := lexicon.NewBuilder()
	if err := b.AddWordList("/usr/share/dict/american-english"); err != nil {
		return nil, err
	}
	skipped := 0
	for _, set := range []string{"moby", "sotu"} {
		names, _ := filepath.Glob(filepath.Join(data, set, "package", "data", "*.txt"))
		for _, n := range names {
			if held[set+"/"+strings.TrimSuffix(filepath.Base(n), ".txt")] {
				skipped++
				continue
			}
			if err := b.AddTextFile(n); err != nil {
				return nil, err
			}
		}
	}
	lex := b.Lexicon()
	fmt.Fprintf(os.Stderr, "fair lexicon: %d words, %d source texts of heldout pages left out\n", lex.Len(), skipped)
	return lex, nil
}

// heldText reports whether a manifest row's source text is held out of
// training: its "text" column (corpora built with -split fonttext), else
// its page's split (the id split: every text of a heldout page).
func heldText(r map[string]string) bool {
	if t, ok := r["text"]; ok && t != "-" && t != "" {
		return t == "heldout"
	}
	return r["split"] == "heldout"
}

// heldoutSources returns the source texts of the corpus's heldout pages
// that are files under data (Moby-Dick chapters and addresses; the
// Devil's Dictionary parts are not, and are left out).
func heldoutSources(corpus, data string) ([]string, error) {
	rows, err := manifest(corpus)
	if err != nil {
		return nil, err
	}
	seen := map[string]bool{}
	var names []string
	for _, r := range rows {
		src := r["source"]
		if r["split"] != "heldout" || seen[src] {
			continue
		}
		seen[src] = true
		set, name, ok := strings.Cut(src, "/")
		if !ok || (set != "moby" && set != "sotu") {
			continue
		}
		names = append(names, filepath.Join(data, set, "package", "data", name+".txt"))
	}
	sort.Strings(names)
	return names, nil
}

// manifest reads DIR/MANIFEST.tsv: a header line, then tab-separated rows.
func manifest(dir string) ([]map[string]string, error) {
	data, err := os.ReadFile(filepath.Join(dir, "MANIFEST.tsv"))
	if err != nil {
		return nil, err
	}
	lines := strings.Split(strings.TrimRight(string(data), "\n"), "\n")
	head := strings.Split(lines[0], "\t")
	var rows []map[string]string
	for _, l := range lines[1:] {
		f := strings.Split(l, "\t")
		r := map[string]string{}
		for i, h := range head {
			if i < len(f) {
				r[h] = f[i]
			}
		}
		rows = append(rows, r)
	}
	return rows, nil
}
