package quality

// The bag-of-words error counts the words of the reference missing from the
// hypothesis plus the words of the hypothesis that are extra, both as
// multisets (a word found twice in the reference and once in the
// hypothesis is missing once), regardless of order: what matters for
// full-text search, where a word is found or not wherever it stands.
// bag_wer = BagErrors/Words. A misread word counts twice (the reference
// word is missing and the misreading is extra), so on text in reading
// order bag_wer lies between 0 and twice WER; a reordered hypothesis with
// every word right has bag_wer 0.

// bagErrors returns Σ over words |count in ref − count in hyp| for word
// ids r and h (from WordIDs, numbered from 1). O(len(r)+len(h)) time.
func bagErrors(r, h []rune) int {
	n := 0
	for _, id := range r {
		n = max(n, int(id))
	}
	for _, id := range h {
		n = max(n, int(id))
	}
	diff := make([]int32, n+1)
	for _, id := range r {
		diff[id]++
	}
	for _, id := range h {
		diff[id]--
	}
	errs := 0
	for _, d := range diff {
		errs += int(max(d, -d))
	}
	return errs
}

// BagWER returns the bag-of-words error rate BagErrors/Words, and false
// when the reference has no words. It may exceed 1.
func (c Counts) BagWER() (float64, bool) {
	if c.Words == 0 {
		return 0, false
	}
	return float64(c.BagErrors) / float64(c.Words), true
}
