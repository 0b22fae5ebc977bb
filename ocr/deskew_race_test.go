//go:build race

package ocr

// raceDetector trims the slowest table tests under the race detector,
// which makes image work about ten times slower.
const raceDetector = true
