package main

import "testing"

func TestSpread(t *testing.T) {
	// Nearest-rank percentiles: the p-th percentile of n sorted values is
	// the ceil(p·n)-th (common practice; the worked example 15, 20, 35, 40,
	// 50 gives 20 for p = 0.3 and 35 for the median, as in the usual
	// textbook illustration of the method, from memory).
	s := spread([]float64{0.40, 0.15, 0.50, 0.20, 0.35})
	if s.Median != 0.35 || s.P25 != 0.20 || s.Min != 0.15 || s.Max != 0.50 || s.P90 != 0.50 || s.P10 != 0.15 {
		t.Errorf("spread = %+v", s)
	}
	want := map[string]int{"0.1-0.2": 1, "0.2-0.5": 3, "0.5-0.9": 1}
	if len(s.Histogram) != len(want) {
		t.Errorf("histogram %v, want %v", s.Histogram, want)
	}
	for k, v := range want {
		if s.Histogram[k] != v {
			t.Errorf("histogram %v, want %v", s.Histogram, want)
		}
	}
	if h := spread([]float64{0, 1, 2}).Histogram; h["0-0.01"] != 1 || h["0.9+"] != 2 {
		t.Errorf("edge bands: %v", h)
	}
}
