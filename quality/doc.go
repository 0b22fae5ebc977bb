// Package quality measures OCR quality: text normalisation, edit distance
// and alignment, character and word error rates (CER, WER) against ground
// truth per page, per title and per collection, bootstrap intervals and
// the most frequent confusions. Package quality never calls the OCR engine.
//
// Definitions used throughout. Both texts are first normalised (Normalize;
// by default NFC, white space runs to one space, trimmed). The edit
// distance is the Levenshtein distance (Levenshtein 1966): the least number
// of substitutions, insertions and deletions, each costing 1, that turn the
// reference into the hypothesis.
//
//	CER = distance over Unicode code points / code points in the reference
//	WER = distance over space-separated words / words in the reference
//
// Both may exceed 1 (a hypothesis much longer than its reference) and are
// undefined for an empty reference. Titles and collections are
// micro-averaged: the sum of edits over the sum of reference lengths.
//
// The distance and the alignment are exact. Distance uses diagonal
// transition (cost about D² for distance D) and switches to Myers' bit
// vectors when D is large; Align traces back through stored rounds or
// splits the problem in linear memory (see their docs for the complexity).
// The textbook O(n·m) table is kept, unexported, as the benchmark baseline
// and the tests' oracle.
package quality
