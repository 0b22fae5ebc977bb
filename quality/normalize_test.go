package quality

import (
	"strings"
	"testing"
	"unicode/utf8"

	"golang.org/x/text/unicode/norm"
)

func TestNormalize(t *testing.T) {
	all := NormOptions{FoldCase: true, IgnorePunct: true, PlainTypography: true}
	tests := []struct {
		name string
		in   string
		o    NormOptions
		want string
	}{
		// Defaults (Unicode Standard Annex #15 for NFC; the rest common practice).
		{"NFD to NFC", "cafe\u0301", NormOptions{}, "café"},
		{"BOM dropped", "\uFEFFpage one", NormOptions{}, "page one"},
		{"CRLF and runs", "line one\r\n\r\nline\ttwo  three\n", NormOptions{}, "line one line two three"},
		{"no-break space", "10\u00A0km", NormOptions{}, "10 km"},
		{"trim", "  \n text \t", NormOptions{}, "text"},
		{"case kept", "Ledger", NormOptions{}, "Ledger"},
		{"punct kept", "“Well—yes.”", NormOptions{}, "“Well—yes.”"},
		{"empty", "", NormOptions{}, ""},
		{"only space", " \r\n\t", NormOptions{}, ""},
		// Unicode full case folding (Unicode CaseFolding.txt: ß folds to ss).
		{"fold", "STRASSE Straße", NormOptions{FoldCase: true}, "strasse strasse"},
		{"fold greek", "ΣΊΣΥΦΟΣ", NormOptions{FoldCase: true}, "σίσυφοσ"},
		{"punct", "“Well—yes,” she said.", NormOptions{IgnorePunct: true}, "Wellyes she said"},
		{"punct leaves symbols", "£5 + 3% = 8 §2", NormOptions{IgnorePunct: true}, "£5 + 3 = 8 2"},
		{"punct joins marks", "e.\u0301", NormOptions{IgnorePunct: true}, "é"},
		{"punct alone", "a - b", NormOptions{IgnorePunct: true}, "a b"},
		{"typography", "‘ſo’ “fine”—ﬁnal… ﬂ ﬀ ﬃ ﬄ ﬅ ﬆ", NormOptions{PlainTypography: true}, `'so' "fine"-final... fl ff ffi ffl st st`},
		{"Fraktur forms", "Haus⸗\nthür woꝛt ſchoͤn Aͤrger", NormOptions{PlainTypography: true}, "Haus- thür wort schön Ärger"},
		{"typography with punct off", "ﬁnal—“ſo”", all, "finalso"},
		{"all", "  The  ‘Œuvre’\r\n", all, "the œuvre"},
		// U+0149 folds to U+02BC + "n" (CaseFolding.txt); the apostrophe is
		// then made plain and dropped as punctuation.
		{"fold before punct", "ŉ", all, "n"},
		{"BOM inside", "page one\uFEFF page two", NormOptions{}, "page one page two"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := Normalize(tt.in, tt.o); got != tt.want {
				t.Errorf("Normalize(%q, %+v) = %q, want %q", tt.in, tt.o, got, tt.want)
			}
		})
	}
}

func TestNormOptionsString(t *testing.T) {
	if got := (NormOptions{}).String(); got != "NFC, white space collapsed and trimmed, case kept, punctuation kept, typography kept" {
		t.Errorf("default description = %q", got)
	}
	got := NormOptions{FoldCase: true, IgnorePunct: true, PlainTypography: true}.String()
	for _, w := range []string{"case folded", "punctuation ignored", "typography made plain"} {
		if !strings.Contains(got, w) {
			t.Errorf("description %q lacks %q", got, w)
		}
	}
}

func TestTitlePage(t *testing.T) {
	tests := []struct{ rel, root, title, page string }{
		{"ledger-1841/p0007.txt", "gt", "ledger-1841", "ledger-1841/p0007"},
		{"ledger-1841/vol2/p0001.txt", "gt", "ledger-1841", "ledger-1841/vol2/p0001"},
		{"p0001.txt", "harbour-gazette", "harbour-gazette", "p0001"},
		{"notes.txt.txt", "gt", "gt", "notes.txt"},
	}
	for _, tt := range tests {
		title, page := TitlePage(tt.rel, tt.root)
		if title != tt.title || page != tt.page {
			t.Errorf("TitlePage(%q, %q) = %q, %q; want %q, %q", tt.rel, tt.root, title, page, tt.title, tt.page)
		}
	}
}

// FuzzNormalize: the normaliser never panics, yields valid UTF-8 in NFC
// with no double, leading or trailing space, and is idempotent.
func FuzzNormalize(f *testing.F) {
	for _, s := range []string{"", " a  b ", "cafe\u0301", "\uFEFF\r\n", "ﬁ—“ſ”", "İSTANBUL", "\xff\xfe", "a\u0301\u0308 "} {
		f.Add(s, uint8(0))
		f.Add(s, uint8(7))
	}
	f.Fuzz(func(t *testing.T, s string, flags uint8) {
		if len(s) > 4096 {
			return
		}
		o := NormOptions{FoldCase: flags&1 != 0, IgnorePunct: flags&2 != 0, PlainTypography: flags&4 != 0}
		got := Normalize(s, o)
		if !utf8.ValidString(got) {
			t.Fatalf("Normalize(%q) = %q: invalid UTF-8", s, got)
		}
		if strings.Contains(got, "  ") || strings.HasPrefix(got, " ") || strings.HasSuffix(got, " ") {
			t.Fatalf("Normalize(%q) = %q: stray spaces", s, got)
		}
		if !norm.NFC.IsNormalString(got) {
			t.Fatalf("Normalize(%q) = %q: not NFC", s, got)
		}
		// Canonically equivalent inputs (UAX #15) normalise alike.
		if nfd := Normalize(norm.NFD.String(s), o); nfd != got {
			t.Fatalf("Normalize(NFD %q) = %q, Normalize(%q) = %q", norm.NFD.String(s), nfd, s, got)
		}
		if again := Normalize(got, o); again != got {
			t.Fatalf("Normalize not idempotent: %q -> %q -> %q", s, got, again)
		}
	})
}
