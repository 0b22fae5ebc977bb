package lexicon

import (
	"bytes"
	"reflect"
	"testing"
)

// FuzzRead: the loader never panics, returns nil with every error, and a
// lexicon it accepts survives a write/read round trip unchanged.
func FuzzRead(f *testing.F) {
	f.Add([]byte("recto-lexicon\t1\t2\t1\nwhale\t3\nsea\t1\nsea\twhale\t2\n"))
	f.Add([]byte("recto-lexicon\t1\nCafé\t2\n# comment\n\n"))
	f.Add([]byte("recto-lexicon\t1\nsea\t1,2\n"))
	f.Add([]byte("recto-lexicon\t2\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) > 4096 {
			return
		}
		l, err := read(bytes.NewReader(data), "fuzz")
		if err != nil {
			if l != nil {
				t.Fatal("lexicon returned with an error")
			}
			return
		}
		var buf bytes.Buffer
		if _, err := l.WriteTo(&buf); err != nil {
			t.Fatal(err)
		}
		l2, err := read(&buf, "again")
		if err != nil {
			t.Fatalf("re-reading written lexicon: %v\n%q", err, buf.String())
		}
		if !reflect.DeepEqual(l.Words(), l2.Words()) || l.Total() != l2.Total() || l.Bigrams() != l2.Bigrams() {
			t.Fatalf("round trip changed the lexicon")
		}
	})
}
