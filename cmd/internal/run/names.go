package run

import (
	"fmt"
	"os"
	"path"
	"path/filepath"
	"strings"

	"recto/cmd/internal/run/fname"
	"recto/ocr"
)

// Output names.
//
// The rule: a page's outputs are named after the whole relative path of its
// image, extension included, with the output suffix added:
// "Title A/p001.tif" gives ocr/Title A/p001.tif.txt, .tif.alto.xml and
// .tif.json. Two images have two different relative paths, so their output
// names differ, and a page's name never depends on which other images are
// in the collection (adding p001.png later does not rename p001.tif's
// outputs).
//
// Collisions are still possible where the file system, not the rule, makes
// two names one, and checkNames finds each before any page is recognised:
//   - an output folder that ignores case (or folds Unicode forms) makes
//     "P1.tif" and "p1.tif" one file: probed with a file in the output folder;
//   - a collection folder named like another page's output ("p1.tif.txt/"
//     beside "p1.tif") would need a file and a folder of one name;
//   - a name that is too long once the suffix is added.
// Such pages fail as set-up problems naming both inputs (or the limit); they
// are never written over one another.

// outputStem returns the output name of the image at rel (see the rule above).
func outputStem(rel string) string { return rel }

// outputSuffixes are the suffixes ocr.WriteOutputs adds to a stem.
var outputSuffixes = []string{ocr.SuffixText, ocr.SuffixALTO, ocr.SuffixRecord}

// nameMax is the longest file name (one path element, bytes) the common
// Linux file systems allow (NAME_MAX, 255 on ext4, XFS, Btrfs; from memory).
const nameMax = 255

// checkNames finds the pages whose output names would clash or cannot be
// made in outDir. foldCase says the output folder ignores case.
func checkNames(pages []pageJob, foldCase bool) map[string]string {
	bad := map[string]string{}
	key := func(s string) string {
		if foldCase {
			return strings.ToLower(s)
		}
		return s
	}
	files := map[string]string{} // output file key -> rel
	dirs := map[string]string{}  // output folder key -> a rel that needs it
	for _, p := range pages {
		stem := outputStem(p.Rel)
		if base := path.Base(stem); len(base)+len(ocr.SuffixALTO) > nameMax {
			bad[p.Rel] = fmt.Sprintf("the file name is %d bytes; with the output suffix %q it is over the %d-byte limit of file names: shorten it (or copy the collection with shorter names)",
				len(base), ocr.SuffixALTO, nameMax)
			continue
		}
		for d := path.Dir(stem); d != "." && d != "/"; d = path.Dir(d) {
			if _, ok := dirs[key(d)]; !ok {
				dirs[key(d)] = p.Rel
			}
		}
		for _, s := range outputSuffixes {
			k := key(stem + s)
			if other, ok := files[k]; ok && other != p.Rel {
				why := "the output folder ignores upper and lower case"
				if !foldCase {
					why = "they give the same output name"
				}
				bad[p.Rel] = fmt.Sprintf("output %q would also be the output of %q (%s): rename one of the two images", stem+s, EscapeName(other), why)
				if _, ok := bad[other]; !ok {
					bad[other] = fmt.Sprintf("output %q would also be the output of %q (%s): rename one of the two images", stem+s, EscapeName(p.Rel), why)
				}
				continue
			}
			files[k] = p.Rel
		}
	}
	for k, rel := range files {
		if other, ok := dirs[k]; ok {
			msg := fmt.Sprintf("its output %q would have to be a folder too, for %q: rename the folder or the image", k, EscapeName(other))
			bad[rel] = msg
		}
	}
	return bad
}

// foldsCase reports whether the folder dir treats names differing only in
// case as one (as on macOS and Windows volumes, exFAT and vfat drives). It
// creates and removes one probe file.
func foldsCase(dir string) bool {
	f, err := os.CreateTemp(dir, ".recto-case-probe-*")
	if err != nil {
		return false
	}
	name := f.Name()
	f.Close()
	defer os.Remove(name)
	base := filepath.Base(name)
	upper := filepath.Join(dir, strings.ToUpper(base))
	if upper == name {
		return false
	}
	_, err = os.Stat(upper)
	return err == nil
}

// EscapeName returns a file name as text that shows every byte, one to
// one (fname.Escape); reports show names in this form, links use the real
// path.
func EscapeName(s string) string { return fname.Escape(s) }

// UnescapeName reverses EscapeName.
func UnescapeName(s string) (string, error) { return fname.Unescape(s) }
