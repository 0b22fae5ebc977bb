// Package synth renders text to synthetic scanned pages with a known ground
// truth and degrades them the way real scans are degraded (skew, blur,
// noise, uneven light, fading, low resolution, worn and bleeding type).
//
// Everything is deterministic: the same text, layout and degradation
// (including its Seed) give the same pixels on every machine, because
// rendering uses the embedded Go fonts (golang.org/x/image/font/gofont) and
// every random choice comes from math/rand/v2 PCG streams seeded explicitly.
//
// Pages are 8-bit grey, black ink on white paper. Coordinates are page
// pixels, origin top left. Angles are degrees, counter-clockwise positive.
// Grey levels run from 0 (black) to 255 (white).
//
// Package synth is pure Go and never calls the OCR engine. The demo
// collection (Demo) is fictional text written for this project.
package synth
