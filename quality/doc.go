// Package quality measures OCR quality: edit-distance alignment, character
// and word error rates (CER, WER) against ground truth, and an estimate of a
// page's quality when there is no ground truth.
//
// CER is the Levenshtein distance between the normalised reference and
// hypothesis, counted in Unicode code points, divided by the number of code
// points in the reference; WER is the same over whitespace-separated words.
// Both may exceed 1 (a hypothesis much longer than its reference). Package
// quality never calls the OCR engine.
package quality
