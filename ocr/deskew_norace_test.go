//go:build !race

package ocr

const raceDetector = false
