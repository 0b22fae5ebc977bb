package ledger

import (
	"fmt"
	"path/filepath"
	"testing"
)

// BenchmarkWriterPut hands pages to the writer goroutine as fast as it
// takes them (WAL, synchronous=FULL): pages that queue up share a
// transaction. The brief's measured engine time is 2.45 s per A4 page with
// one Tesseract thread (this machine); overhead_% relates the two.
func BenchmarkWriterPut(b *testing.B) {
	l, err := Open(filepath.Join(b.TempDir(), FileName))
	if err != nil {
		b.Fatal(err)
	}
	defer l.Close()
	w := l.NewWriter(nil)
	p := samplePage("")
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		p.Rel = fmt.Sprintf("title-%03d/page-%05d.tif", i%200, i)
		w.Put(p)
	}
	if err := w.Close(); err != nil {
		b.Fatal(err)
	}
	perPage := b.Elapsed().Seconds() / float64(b.N)
	b.ReportMetric(perPage*1000, "ms/page")
	b.ReportMetric(100*perPage/2.45, "overhead_%")
}

// BenchmarkPutOne is one page, one transaction, one disk sync: the case of
// a real run, where pages reach the writer seconds apart. Its overhead_%
// is the ledger's share of a 2.45 s page.
func BenchmarkPutOne(b *testing.B) {
	l, err := Open(filepath.Join(b.TempDir(), FileName))
	if err != nil {
		b.Fatal(err)
	}
	defer l.Close()
	p := samplePage("")
	ctx := b.Context()
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		p.Rel = fmt.Sprintf("title-%03d/page-%05d.tif", i%200, i)
		if err := l.Put(ctx, p); err != nil {
			b.Fatal(err)
		}
	}
	perPage := b.Elapsed().Seconds() / float64(b.N)
	b.ReportMetric(perPage*1000, "ms/page")
	b.ReportMetric(100*perPage/2.45, "overhead_%")
}
