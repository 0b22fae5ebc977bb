package synth

import (
	"math"
	"math/rand/v2"
)

// Kind is a named degradation preset.
type Kind struct {
	Name  string
	D     Degradation // Seed is 0; callers set their own
	Blank bool        // the page carries no text: render empty text, then degrade
}

// Kinds returns the named presets, each at a severity a person still reads
// easily (except "blank", which has nothing to read):
//
//	clean     no degradation
//	lowres    scanned at 40% of the resolution (120 dpi from 300) with a slight blur
//	skewed    turned 3.5° counter-clockwise
//	noisy     heavy grain (σ 70 grey levels) over slightly soft type
//	uneven    one side of the page dimmed by up to 80% (a shadow or a curled page)
//	blank     an empty page with faint grain and a slight shadow
//	worn      broken type: 20% of the area loses its ink in small blobs, a little faded
//	faded     ink at 35% of its contrast, slightly soft
//	bleeding  ink spread: heavy, smeared strokes
func Kinds() []Kind {
	return []Kind{
		{Name: "clean"},
		{Name: "lowres", D: Degradation{Scale: 0.4, Blur: 0.8}},
		{Name: "skewed", D: Degradation{Skew: 3.5, Noise: 4}},
		{Name: "noisy", D: Degradation{Noise: 70, Blur: 0.7}},
		{Name: "uneven", D: Degradation{Light: 0.8, Noise: 4}},
		{Name: "blank", D: Degradation{Noise: 6, Light: 0.2}, Blank: true},
		{Name: "worn", D: Degradation{Wear: 0.2, Contrast: 0.15}},
		{Name: "faded", D: Degradation{Contrast: 0.65, Blur: 0.6, Noise: 3}},
		{Name: "bleeding", D: Degradation{Bleed: 0.55, Blur: 0.5}},
	}
}

// KindByName returns the preset called name and whether it exists.
func KindByName(name string) (Kind, bool) {
	for _, k := range Kinds() {
		if k.Name == name {
			return k, true
		}
	}
	return Kind{}, false
}

// Level returns a mixed degradation of severity t in [0, 1] (clamped) for
// a 300 dpi page of 10 to 12 pt text. 0 is clean; up to about 0.3 the
// engine still reads nearly everything; from 0.3 to 0.9 its character error
// rate climbs through most of the range; from 0.9 to 1 the damage rises
// steeply, and at 1 the engine reads next to nothing (CER 0.7 to 1) and a
// person can make out only a few words. (Calibrated against Tesseract 5.3,
// with and without recto's page preparation, on 100x90 mm pages; see
// docs/dev-synth.md.) The seed picks how the severity is shared among the
// effects (each gets between a quarter of it and all of it; one random
// effect gets all of it) and becomes the Degradation's Seed, so equal
// (t, seed) give equal results. For a fixed seed every effect grows with t.
func Level(t float64, seed uint64) Degradation {
	t = clamp01(t)
	d := Degradation{Seed: seed}
	if t == 0 {
		return d
	}
	// Effect strength u as a function of t: recto's error rate rises
	// between u = 0.42 and about 0.85, so that stretch takes most of the t
	// range; u = 1.6 at t = 1 makes every seed unreadable (measured,
	// docs/dev-synth.md). Effects past their range are clamped by Degrade.
	var u float64
	switch {
	case t <= 0.3:
		u = 1.4 * t
	case t <= 0.9:
		u = 0.42 + 0.43/0.6*(t-0.3)
	default:
		u = 0.85 + 7.5*(t-0.9)
	}
	r := rand.New(rand.NewPCG(seed, 0x1e7e1))
	const effects = 9
	var s [effects]float64
	for i := range s {
		s[i] = u * (0.25 + 0.75*r.Float64())
	}
	s[r.IntN(effects)] = u
	sign := 1.0
	if r.IntN(2) == 0 {
		sign = -1
	}
	d.Skew = sign * 5 * s[0]
	d.Blur = 3 * math.Pow(s[1], 1.3)
	d.Noise = 90 * s[2]
	d.SaltPepper = 0.1 * s[3] * s[3]
	d.Light = 0.85 * s[4]
	d.Contrast = 0.85 * math.Pow(s[5], 1.5)
	d.Scale = max(0.2, 1-0.7*s[6]) // at most 5x smaller (60 dpi); 0 would mean unchanged
	d.Wear = 0.45 * math.Pow(s[7], 1.5)
	d.Bleed = 0.7 * math.Pow(s[8], 1.5)
	return d
}
