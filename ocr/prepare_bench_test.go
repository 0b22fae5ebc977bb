package ocr

import (
	"image"
	"testing"
	"time"
)

// benchPages are A4 pages at 300 dpi (2480 × 3508), drawn once.
var benchPages = map[string]func(testing.TB) *image.Gray{
	"clean": func(tb testing.TB) *image.Gray { return a4(tb, 300) },
	"noisy": func(tb testing.TB) *image.Gray { g := a4(tb, 300); addNoise(g, 40, 1); return g },
	"skewed": func(tb testing.TB) *image.Gray {
		// Rotated by 7° and cropped back to A4, as a scanner would.
		g := skewed(a4(tb, 300), 7)
		r := image.Rect(0, 0, 2480, 3508).Add(image.Pt((g.Rect.Dx()-2480)/2, (g.Rect.Dy()-3508)/2))
		return toGray(g.SubImage(r))
	},
	"uneven": func(tb testing.TB) *image.Gray { g := a4(tb, 300); unevenLight(g, 0.35); return g },
}

// BenchmarkPrepare reports, per A4 300 dpi page, the wall time of each
// step and in total (ms/page), the process CPU time (cpu-ms/page, which
// other load on the machine does not inflate as much), and allocations.
// Run on one core:
//
//	go test ./ocr -run '^$' -bench Prepare -benchtime 5x -cpu 1
func BenchmarkPrepare(b *testing.B) {
	for _, name := range []string{"clean", "noisy", "skewed", "uneven"} {
		b.Run(name, func(b *testing.B) {
			page := benchPages[name](b)
			b.ReportAllocs()
			steps := map[string]time.Duration{}
			var order []string
			cpu0 := cpuTime()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				p, err := Prepare(page, PrepOptions{})
				if err != nil {
					b.Fatal(err)
				}
				for _, s := range p.Steps {
					if _, ok := steps[s.Name]; !ok {
						order = append(order, s.Name)
					}
					steps[s.Name] += s.Duration
				}
			}
			b.StopTimer()
			cpu := cpuTime() - cpu0
			for _, n := range order {
				b.ReportMetric(steps[n].Seconds()*1000/float64(b.N), n+"-ms")
			}
			b.ReportMetric(b.Elapsed().Seconds()*1000/float64(b.N), "ms/page")
			if cpu > 0 {
				b.ReportMetric(cpu.Seconds()*1000/float64(b.N), "cpu-ms/page")
			}
		})
	}
}

// BenchmarkOtsu and BenchmarkSauvola time binarisation alone on an A4
// page at 300 dpi.
func BenchmarkOtsu(b *testing.B) {
	page := a4(b, 300)
	dst := image.NewGray(page.Rect)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		threshold(dst, page, otsu(histogram(page)))
	}
	b.ReportMetric(b.Elapsed().Seconds()*1000/float64(b.N), "ms/page")
}

// BenchmarkHistogram counts the grey levels of a clean A4 page at 300 dpi
// (mostly paper: the case where one table's counter is a chain of
// dependent increments).
func BenchmarkHistogram(b *testing.B) {
	page := a4(b, 300)
	for b.Loop() {
		histogram(page)
	}
	b.ReportMetric(b.Elapsed().Seconds()*1000/float64(b.N), "ms/page")
}

func BenchmarkSauvola(b *testing.B) {
	page := a4(b, 300)
	dst := image.NewGray(page.Rect)
	var it integral
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		sauvola(dst, page, sauvolaWindow(page.Rect.Dx(), page.Rect.Dy()), &it)
	}
	b.ReportMetric(b.Elapsed().Seconds()*1000/float64(b.N), "ms/page")
}
