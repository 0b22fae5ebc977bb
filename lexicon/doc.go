// Package lexicon holds word lists with frequencies: unigram and bigram
// counts keyed by a documented normal form, built from word lists, Hunspell
// dictionaries and running text, and used by triage and correction.
package lexicon
