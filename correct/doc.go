// Package correct fixes common OCR confusions with a noisy-channel model:
// for each token it chooses the candidate c that maximises
// P(observed | c) · P(c | context), and changes the token only when the best
// candidate beats the token itself by a margin.
package correct
