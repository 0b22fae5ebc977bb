package main

import (
	"fmt"
	"os"
	"strings"
)

// family is one type family of a Debian font package: its faces by style
// and what it stands for in the corpus. Licences are from each package's
// /usr/share/doc/PKG/copyright (Debian 12).
type family struct {
	Name    string
	Class   string // serif, sans, period (a book face of an older period), typewriter, blackletter
	Package string
	Licence string
	Heldout bool              // -fonts debian with -split fonttext: never in training
	Faces   map[string]string // style ("regular", "italic", "bold") → font file
}

const (
	lib2 = "/usr/share/fonts/truetype/liberation2/"
	dvu  = "/usr/share/fonts/truetype/dejavu/"
	linl = "/usr/share/fonts/opentype/linux-libertine/"
)

// latinFamilies are the families of -fonts debian: eleven for training
// (serif, sans, period book faces, typewriters) and four held out, one of
// each class, for the font-and-text split.
var latinFamilies = []family{
	{"Liberation Serif", "serif", "fonts-liberation2", "OFL-1.1", false, map[string]string{"regular": lib2 + "LiberationSerif-Regular.ttf", "italic": lib2 + "LiberationSerif-Italic.ttf", "bold": lib2 + "LiberationSerif-Bold.ttf"}},
	{"Liberation Sans", "sans", "fonts-liberation2", "OFL-1.1", false, map[string]string{"regular": lib2 + "LiberationSans-Regular.ttf", "italic": lib2 + "LiberationSans-Italic.ttf", "bold": lib2 + "LiberationSans-Bold.ttf"}},
	{"Liberation Mono", "typewriter", "fonts-liberation2", "OFL-1.1", false, map[string]string{"regular": lib2 + "LiberationMono-Regular.ttf", "bold": lib2 + "LiberationMono-Bold.ttf"}},
	{"DejaVu Serif", "serif", "fonts-dejavu-core, fonts-dejavu-extra", "Bitstream Vera", false, map[string]string{"regular": dvu + "DejaVuSerif.ttf", "italic": dvu + "DejaVuSerif-Italic.ttf", "bold": dvu + "DejaVuSerif-Bold.ttf"}},
	{"DejaVu Sans", "sans", "fonts-dejavu-core, fonts-dejavu-extra", "Bitstream Vera", false, map[string]string{"regular": dvu + "DejaVuSans.ttf", "italic": dvu + "DejaVuSans-Oblique.ttf", "bold": dvu + "DejaVuSans-Bold.ttf"}},
	{"Linux Libertine", "serif", "fonts-linuxlibertine", "GPL-2+ with font exception, OFL-1.1", false, map[string]string{"regular": linl + "LinLibertine_R.otf", "italic": linl + "LinLibertine_RI.otf", "bold": linl + "LinLibertine_RB.otf"}},
	// EB Garamond 12 Bold of this package lacks the umlauts and ß: left out.
	{"EB Garamond", "period", "fonts-ebgaramond", "OFL-1.1", false, map[string]string{"regular": "/usr/share/fonts/opentype/ebgaramond/EBGaramond12-Regular.otf", "italic": "/usr/share/fonts/opentype/ebgaramond/EBGaramond12-Italic.otf"}},
	{"Goudy Bookletter 1911", "period", "fonts-goudybookletter", "public domain", false, map[string]string{"regular": "/usr/share/fonts/opentype/sortsmill/GoudyBookletter1911.otf"}},
	{"Century Catalogue", "period", "fonts-century-catalogue", "OFL-1.0", false, map[string]string{"regular": "/usr/share/fonts/truetype/fonts-century-catalogue/Century-Catalogue.ttf"}},
	{"Courier Prime", "typewriter", "fonts-courier-prime", "OFL-1.1", false, map[string]string{"regular": "/usr/share/fonts/opentype/courier-prime/Courier Prime.otf", "italic": "/usr/share/fonts/opentype/courier-prime/Courier Prime Italic.otf", "bold": "/usr/share/fonts/opentype/courier-prime/Courier Prime Bold.otf"}},
	{"FreeSerif", "serif", "fonts-freefont-ttf", "GPL-3+ with font exception", false, map[string]string{"regular": "/usr/share/fonts/truetype/freefont/FreeSerif.ttf", "italic": "/usr/share/fonts/truetype/freefont/FreeSerifItalic.ttf", "bold": "/usr/share/fonts/truetype/freefont/FreeSerifBold.ttf"}},
	// Held out: one of each class.
	{"Caladea", "serif", "fonts-crosextra-caladea", "OFL-1.1, Apache-2.0", true, map[string]string{"regular": "/usr/share/fonts/truetype/crosextra/Caladea-Regular.ttf", "italic": "/usr/share/fonts/truetype/crosextra/Caladea-Italic.ttf", "bold": "/usr/share/fonts/truetype/crosextra/Caladea-Bold.ttf"}},
	{"Linux Biolinum", "sans", "fonts-linuxlibertine", "GPL-2+ with font exception, OFL-1.1", true, map[string]string{"regular": linl + "LinBiolinum_R.otf", "italic": linl + "LinBiolinum_RI.otf", "bold": linl + "LinBiolinum_RB.otf"}},
	{"Old Standard", "period", "fonts-oldstandard", "OFL-1.1", true, map[string]string{"regular": "/usr/share/fonts/truetype/fonts-oldstandard/OldStandard-Regular.ttf", "italic": "/usr/share/fonts/truetype/fonts-oldstandard/OldStandard-Italic.ttf", "bold": "/usr/share/fonts/truetype/fonts-oldstandard/OldStandard-Bold.ttf"}},
	{"GNU Typewriter", "typewriter", "fonts-gnutypewriter", "OFL-1.1", true, map[string]string{"regular": "/usr/share/fonts/truetype/gnutypewriter/GNUTypewriter.ttf"}},
}

// frakturFamilies are the families of -fonts fraktur: Blankenburg, a
// blackletter with the long s, ß and umlauts, for training; Gamaliel, a
// rounder blackletter, held out.
var frakturFamilies = []family{
	{"Blankenburg", "blackletter", "fonts-blankenburg", "OFL-1.1", false, map[string]string{"regular": "/usr/share/fonts/truetype/blankenburg/Blankenburg_UNZ1A.ttf"}},
	{"Gamaliel", "blackletter", "fonts-gamaliel", "OFL-1.1", true, map[string]string{"regular": "/usr/share/fonts/truetype/gamaliel/Gamaliel.ttf"}},
}

// fontSet returns the families of a -fonts value: "go" (nil: the Go fonts
// by fontChoices, as the corpus was built before), "debian" or "fraktur".
// Every face file must exist; the error names the package to install.
func fontSet(name string) ([]family, error) {
	var fams []family
	switch name {
	case "go", "":
		return nil, nil
	case "debian":
		fams = latinFamilies
	case "fraktur":
		fams = frakturFamilies
	default:
		return nil, fmt.Errorf("-fonts %q: want go, debian or fraktur", name)
	}
	var missing []string
	for _, f := range fams {
		for _, path := range f.Faces {
			if _, err := os.Stat(path); err != nil {
				missing = append(missing, f.Package)
				break
			}
		}
	}
	if len(missing) > 0 {
		return nil, fmt.Errorf("-fonts %s: font files missing; install the Debian packages %s (scripts/setup --test)", name, strings.Join(missing, " "))
	}
	return fams, nil
}

// styleWeights share a family's pages among its faces (a style the family
// lacks falls back to regular).
var styleWeights = []struct {
	style  string
	weight int
}{{"regular", 70}, {"italic", 15}, {"bold", 15}}

func (f family) face(w int) (style, path string) {
	for _, s := range styleWeights {
		if w < s.weight {
			if p, ok := f.Faces[s.style]; ok {
				return s.style, p
			}
			return "regular", f.Faces["regular"]
		}
		w -= s.weight
	}
	return "regular", f.Faces["regular"]
}
