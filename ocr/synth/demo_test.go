package synth

import (
	"bytes"
	"strings"
	"testing"
)

func TestDemoCollection(t *testing.T) {
	titles := Demo()
	if len(titles) != 3 {
		t.Fatalf("%d titles, want 3", len(titles))
	}
	kinds := map[string]bool{}
	ids := map[string]bool{}
	for _, ti := range titles {
		if ti.Name == "" || ti.ID == "" || ids[ti.ID] {
			t.Errorf("title %q has an empty or repeated name or ID %q", ti.Name, ti.ID)
		}
		ids[ti.ID] = true
		text := 0
		for i, p := range ti.Pages {
			kinds[ti.Kinds[i].Name] = true
			if p == "" {
				if !ti.Kinds[i].Blank {
					t.Errorf("%s page %d: empty text but kind %q", ti.ID, i+1, ti.Kinds[i].Name)
				}
				continue
			}
			text++
			if n := len(strings.Fields(p)); n < 120 || n > 180 {
				t.Errorf("%s page %d: %d words, want 120 to 180", ti.ID, i+1, n)
			}
			if miss, err := Missing(p, ti.Layout.Font); err != nil || len(miss) > 0 {
				t.Errorf("%s page %d: font %q lacks %q (%v)", ti.ID, i+1, ti.Layout.Font, string(miss), err)
			}
		}
		if text != 8 {
			t.Errorf("%s: %d text pages, want 8", ti.ID, text)
		}
	}
	for _, k := range []string{"clean", "skewed", "noisy", "uneven", "lowres", "blank", "worn", "faded"} {
		if !kinds[k] {
			t.Errorf("no demo page is %q", k)
		}
	}
}

func TestDemoPagesRender(t *testing.T) {
	titles := Demo()
	for _, ti := range titles {
		for i, text := range ti.Pages {
			// Render only: degrading every A5 page would make the test slow.
			p, rest, err := Render(text, ti.Layout)
			if err != nil {
				t.Fatal(err)
			}
			if rest != "" {
				t.Errorf("%s page %d: %q does not fit", ti.ID, i+1, rest)
			}
			if got, want := strings.Fields(p.Truth), strings.Fields(text); strings.Join(got, " ") != strings.Join(want, " ") {
				t.Errorf("%s page %d: truth differs from the page text", ti.ID, i+1)
			}
		}
	}
	if _, err := titles[0].Page(99); err == nil {
		t.Error("Page(99) gave no error")
	}
	// Page is Render with the title's layout, then Degrade with the page's
	// kind: check the composition on the clean first page (cheap) ...
	a, err := titles[0].Page(0)
	if err != nil {
		t.Fatal(err)
	}
	if c, _, _ := Render(titles[0].Pages[0], titles[0].Layout); !bytes.Equal(a.Image.Pix, c.Image.Pix) || a.Truth != c.Truth {
		t.Error("the clean demo page differs from its rendering")
	}
	// ... and that the page seeds are fixed and distinct.
	seeds := map[uint64]bool{}
	again := Demo()
	for i, ti := range titles {
		for j, k := range ti.Kinds {
			if k != again[i].Kinds[j] {
				t.Errorf("%s page %d: degradation differs between calls", ti.ID, j+1)
			}
			if seeds[k.D.Seed] {
				t.Errorf("%s page %d: seed %d repeated", ti.ID, j+1, k.D.Seed)
			}
			seeds[k.D.Seed] = true
		}
	}
}
