// Package lexicon holds word lists with frequencies: unigram and word-pair
// (bigram) counts keyed by a documented normal form, built from plain word
// lists, Hunspell dictionaries and running text, and used by triage (the
// share of words found) and by correction.
//
// Keys: every lookup goes through Key (Unicode NFC, then lower case;
// diacritics kept). Fold is the accent-blind form (combining marks
// removed) used by HasFold. The file format, read by Load and written by
// Save, is documented in file.go; Default returns the embedded English
// lexicon (origin and licences in data/SOURCES.md).
//
// Bad input is reported as *ParseError naming the file and line; input
// that is not UTF-8 is an error (ErrNotUTF8), never guessed at.
package lexicon
