// Package correct fixes common OCR confusions with a noisy-channel model:
// for each token it chooses the candidate c that maximises
// P(observed | c) · P(c | context), and changes the token only when the best
// candidate beats the token itself by a margin (Config.Margin, natural-log
// odds; the zero Config is valid and conservative).
//
// The error model (Model) holds generalised edits of up to three characters
// a side learned from aligned ground truth and OCR (Train; Brill and Moore
// 2000); DefaultModel is embedded, trained on recto's synthetic corpus. The
// context model is stupid backoff over a lexicon's unigram and bigram counts
// (Brants et al. 2007). Candidates come from a symmetric-deletion index of
// the lexicon (edit distance 2) and from undoing learned confusions.
//
// A Corrector is safe for concurrent use once New returns; the lexicon and
// model it was given must not change afterwards. CorrectText and
// CorrectRecord never modify their input and report every change with its
// 1-based line and rune column in the page text.
package correct
