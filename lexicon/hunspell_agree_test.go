package lexicon

import (
	"bytes"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"unicode"
	"unicode/utf8"
)

// TestHunspellAgreement compares Has on a lexicon built from a Debian
// Hunspell dictionary (its expansion and compounding rules) with the
// verdict of Hunspell's own tool on the same dictionary: Németh et al.,
// hunspell 1.7.1 (Debian package hunspell), run as `hunspell -i utf-8 -d
// DIC -l`, which prints the words it rejects.
//
// The words judged are, for each dictionary, drawn with a fixed seed:
// running text from the language's held-out gettext catalog (Recipe
// HeldOut, never counted into a lexicon), single forms of the dictionary,
// two-part compounds of forms that may begin and end one, joins of any two
// forms (mostly not compounds), and one-letter edits of all of these
// (mostly not words). Hunspell's verdict splits them into accepted and
// rejected words; at least 2,000 of each are compared (issue 12). Words
// whose verdict depends only on case (Hunspell rejects "haus" but accepts
// "Haus"; a lexicon keys words in lower case, see Key) are left out and
// counted (first letter flipped, all capitals or all lower case).
func TestHunspellAgreement(t *testing.T) {
	if _, err := exec.LookPath("hunspell"); err != nil {
		t.Skip("the hunspell command is not installed (Debian package hunspell; scripts/setup installs it)")
	}
	langs := []struct {
		code, dic string
		min       float64 // agreement required each way
	}{
		{"deu", "/usr/share/hunspell/de_DE", 0.995},
		{"nob", "/usr/share/hunspell/nb_NO", 0.995},
		{"nno", "/usr/share/hunspell/nn_NO", 0.995},
	}
	if testing.Short() {
		langs = langs[:1]
	}
	for _, lg := range langs {
		t.Run(lg.code, func(t *testing.T) {
			if _, err := os.Stat(lg.dic + ".dic"); err != nil {
				t.Fatalf("%s.dic is missing: install the Debian package %s (scripts/setup does)", lg.dic, Recipes[lg.code].Hunspell[0].Package)
			}
			checkAgreement(t, lg.code, lg.dic, lg.min)
		})
	}
}

func checkAgreement(t *testing.T, code, dic string, minAgree float64) {
	lex, words := agreementSample(t, code, dic)
	rejected := hunspellRejects(t, dic, words)
	checkVerdicts(t, code, dic, lex, words, rejected, minAgree)
}

// agreementSample builds the lexicon of a Hunspell dictionary (its forms
// and compounding rules, as `recto lexicon build` keeps them) and draws
// the words TestHunspellAgreement judges (see there), with a fixed seed.
func agreementSample(t *testing.T, code, dic string) (*Lexicon, []string) {
	t.Helper()
	aff, err := LoadAffixes(dic + ".aff")
	if err != nil {
		t.Fatal(err)
	}
	b := NewBuilder()
	b.addCompounding(aff)
	var alone, begin, end, any []string
	if err := aff.ReadDicForms(dic+".dic", func(f Form) {
		b.addForm(f)
		if strings.ContainsAny(f.Word, "-.' ") || utf8.RuneCountInString(f.Word) < 2 {
			return
		}
		any = append(any, f.Word)
		if f.Alone {
			alone = append(alone, f.Word)
		}
		if f.Roles&RoleBegin != 0 {
			begin = append(begin, f.Word)
		}
		if f.Roles&RoleEnd != 0 {
			end = append(end, f.Word)
		}
	}); err != nil {
		t.Fatal(err)
	}
	lex := b.Lexicon()

	r := rand.New(rand.NewPCG(12, uint64(len(code))))
	pick := func(ws []string) string { return ws[r.IntN(len(ws))] }
	seen := map[string]bool{}
	var words []string
	addWord := func(w string) {
		if w != "" && !seen[w] && !strings.ContainsAny(w, "\t\n") {
			seen[w] = true
			words = append(words, w)
		}
	}
	// Running text from the held-out catalog.
	var text []string
	for _, h := range Recipes[code].Catalogs.HeldOut {
		msgs, err := ReadCatalog(filepath.Join(Recipes[code].Catalogs.Dir, h))
		if err != nil {
			t.Logf("held-out catalog: %v", err)
			continue
		}
		for _, m := range msgs {
			for _, w := range Tokens(CleanMessage(m)) {
				if utf8.RuneCountInString(w) >= 2 && !strings.Contains(w, "'") {
					text = append(text, w)
				}
			}
		}
	}
	for i := 0; i < 3000 && len(text) > 0; i++ {
		addWord(pick(text))
	}
	for i := 0; i < 3000; i++ {
		addWord(pick(alone))
	}
	lowerFirst := func(s string) string {
		rr, n := utf8.DecodeRuneInString(s)
		return string(unicode.ToLower(rr)) + s[n:]
	}
	if len(begin) > 0 && len(end) > 0 {
		for i := 0; i < 3000; i++ {
			addWord(pick(begin) + lowerFirst(pick(end)))
		}
	}
	for i := 0; i < 1000; i++ {
		addWord(pick(any) + lowerFirst(pick(any)))
	}
	base := slices.Clone(words)
	letters := []rune("abcdefghijklmnopqrstuvwxyzæøåäöüß")
	for i := 0; i < 4000; i++ {
		rs := []rune(pick(base))
		j := r.IntN(len(rs))
		switch r.IntN(3) {
		case 0:
			rs[j] = letters[r.IntN(len(letters))]
		case 1:
			rs = slices.Insert(rs, j, letters[r.IntN(len(letters))])
		default:
			if len(rs) > 2 {
				rs = slices.Delete(rs, j, j+1)
			}
		}
		addWord(string(rs))
	}
	return lex, words
}

// checkVerdicts compares Has with Hunspell's verdicts (rejected: the
// words it rejects).
func checkVerdicts(t *testing.T, code, dic string, lex *Lexicon, words []string, rejected map[string]bool, minAgree float64) {
	// Case-only verdicts: another casing of the word (first letter
	// flipped, all capitals, all lower case) gets the other verdict.
	recase := []func(string) string{flipCase, strings.ToUpper, strings.ToLower}
	var otherRejected []map[string]bool
	for _, f := range recase {
		var other []string
		for _, w := range words {
			other = append(other, f(w))
		}
		otherRejected = append(otherRejected, hunspellRejects(t, dic, other))
	}

	var acc, rej, accAgree, rejAgree, caseOnly int
	var accMiss, rejMiss []string
	for _, w := range words {
		hs := !rejected[w]
		onlyCase := false
		for j, f := range recase {
			if hs != !otherRejected[j][f(w)] {
				onlyCase = true
			}
		}
		if onlyCase {
			caseOnly++
			continue
		}
		ours := lex.Has(w)
		if hs {
			acc++
			if ours {
				accAgree++
			} else if len(accMiss) < 15 {
				accMiss = append(accMiss, w)
			}
		} else {
			rej++
			if !ours {
				rejAgree++
			} else if len(rejMiss) < 15 {
				rejMiss = append(rejMiss, w)
			}
		}
	}
	t.Logf("%s: %d words judged (%d left out: verdict depends on case only); Hunspell accepts %d, Has agrees on %d (%.2f%%); Hunspell rejects %d, Has agrees on %d (%.2f%%)",
		code, len(words), caseOnly, acc, accAgree, 100*float64(accAgree)/float64(max(acc, 1)), rej, rejAgree, 100*float64(rejAgree)/float64(max(rej, 1)))
	t.Logf("%s: accepted by Hunspell, not by Has (first 15): %q", code, accMiss)
	t.Logf("%s: rejected by Hunspell, accepted by Has (first 15): %q", code, rejMiss)
	if acc < 2000 || rej < 2000 {
		t.Fatalf("%s: want at least 2,000 words each way, have %d accepted and %d rejected", code, acc, rej)
	}
	if f := float64(accAgree) / float64(acc); f < minAgree {
		t.Errorf("%s: Has accepts %.2f%% of the words Hunspell accepts, want at least %.0f%%", code, 100*f, 100*minAgree)
	}
	if f := float64(rejAgree) / float64(rej); f < minAgree {
		t.Errorf("%s: Has rejects %.2f%% of the words Hunspell rejects, want at least %.0f%%", code, 100*f, 100*minAgree)
	}
}

// flipCase returns w with its first letter's case changed ("haus" <->
// "Haus").
func flipCase(w string) string {
	r, n := utf8.DecodeRuneInString(w)
	if unicode.IsUpper(r) {
		return string(unicode.ToLower(r)) + w[n:]
	}
	return string(unicode.ToUpper(r)) + w[n:]
}

// hunspellRejects runs the hunspell command on words (one a line, UTF-8)
// and returns the words it lists as misspelt.
func hunspellRejects(t *testing.T, dic string, words []string) map[string]bool {
	t.Helper()
	cmd := exec.Command("hunspell", "-i", "utf-8", "-d", dic, "-l")
	cmd.Stdin = strings.NewReader(strings.Join(words, "\n") + "\n")
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		t.Fatalf("hunspell -d %s: %v: %s", dic, err, errb.String())
	}
	rej := map[string]bool{}
	for _, w := range strings.Split(out.String(), "\n") {
		if w != "" {
			rej[w] = true
		}
	}
	return rej
}
