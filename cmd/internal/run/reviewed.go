package run

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path"
	"path/filepath"
	"sort"
	"strings"

	"recto/cmd/internal/run/ledger"
	"recto/cmd/internal/run/report"
	"recto/internal/atomicfile"
)

// What recto review decides reaches the reports here: a page's reviewed
// decision replaces triage's (the page is marked reviewed, triage's
// decision and reasons kept in its reasons), and a page with rejected
// corrections gets DIR/reviewed/<page>.txt, the engine text with only the
// corrections that stand, as its final text. The ledger's review tables
// are never written by a run, so a rerun keeps them; they count only for
// the input they were made on (ledger.Reviews).

// reviewedDir holds the texts of pages whose corrections were judged.
const reviewedDir = "reviewed"

// BlockedReview is the Blocked reason of a change a reviewer rejected, in
// the run's corrected/changes.jsonl.
const BlockedReview = "rejected in review"

// ChangesOf returns the changes of one done page (its .changes.jsonl
// output), nil when it was not corrected.
func ChangesOf(outDir string, p ledger.Page) ([]ChangeLine, error) {
	for _, o := range p.Outputs {
		if strings.HasSuffix(o, suffixChanges) {
			return readChanges(filepath.Join(outDir, filepath.FromSlash(o)))
		}
	}
	return nil, nil
}

func readChanges(name string) ([]ChangeLine, error) {
	data, err := os.ReadFile(name)
	if err != nil {
		return nil, err
	}
	var out []ChangeLine
	sc := bufio.NewScanner(bytes.NewReader(data))
	sc.Buffer(make([]byte, 64<<10), 16<<20)
	for n := 1; sc.Scan(); n++ {
		if len(bytes.TrimSpace(sc.Bytes())) == 0 {
			continue
		}
		var c ChangeLine
		if err := json.Unmarshal(sc.Bytes(), &c); err != nil {
			return nil, fmt.Errorf("%q:%d: %w", name, n, err)
		}
		out = append(out, c)
	}
	return out, sc.Err()
}

// Key is the change's key in the review log.
func (c ChangeLine) Key() string { return ledger.CorrectionKey(c.Line, c.Column, c.Before, c.After) }

// EngineText returns the run-folder-relative path of a page's engine text
// (ocr/<page>.txt), "" when it has none.
func EngineText(p ledger.Page) string {
	for _, o := range p.Outputs {
		if strings.HasPrefix(o, ocrDir+"/") && strings.HasSuffix(o, ".txt") {
			return o
		}
	}
	return ""
}

// ApplyChanges returns the engine text with the changes in keep made, as
// correction makes them: each change replaces Before at its line and
// column (1-based, in characters; the places refer to the engine text, so
// the changes are made right to left within a line); a deleted word takes
// one space with it and a line left empty goes. A change whose Before is
// not found at its place is left out and counted in missed.
func ApplyChanges(text string, keep []ChangeLine) (out string, missed int) {
	if len(keep) == 0 {
		return text, 0
	}
	trail := strings.HasSuffix(text, "\n")
	lines := strings.Split(strings.TrimSuffix(text, "\n"), "\n")
	cs := append([]ChangeLine(nil), keep...)
	sort.SliceStable(cs, func(i, j int) bool {
		if cs[i].Line != cs[j].Line {
			return cs[i].Line < cs[j].Line
		}
		return cs[i].Column > cs[j].Column
	})
	emptied := make(map[int]bool)
	for _, c := range cs {
		i := c.Line - 1
		if i < 0 || i >= len(lines) {
			missed++
			continue
		}
		rs := []rune(lines[i])
		b := []rune(c.Before)
		at := c.Column - 1
		if at < 0 || at+len(b) > len(rs) || string(rs[at:at+len(b)]) != c.Before {
			missed++
			continue
		}
		end := at + len(b)
		if c.After == "" {
			switch {
			case end < len(rs) && rs[end] == ' ':
				end++
			case at > 0 && rs[at-1] == ' ':
				at--
			}
		}
		was := len(rs) > 0
		rs = append(rs[:at:at], append([]rune(c.After), rs[end:]...)...)
		lines[i] = string(rs)
		if was && len(rs) == 0 {
			emptied[i] = true
		}
	}
	kept := lines[:0:0]
	for i, l := range lines {
		if emptied[i] {
			continue
		}
		// A paragraph emptied whole leaves two separators side by side.
		if l == "" && (len(kept) == 0 || kept[len(kept)-1] == "") && len(emptied) > 0 {
			continue
		}
		kept = append(kept, l)
	}
	for len(kept) > 0 && kept[len(kept)-1] == "" && len(emptied) > 0 {
		kept = kept[:len(kept)-1]
	}
	out = strings.Join(kept, "\n")
	if trail && out != "" {
		out += "\n"
	}
	return out, missed
}

// StandingChanges splits a page's changes into those that stand (made by
// correction and not rejected in review) and the number rejected.
func StandingChanges(changes []ChangeLine, rev ledger.Review) (keep []ChangeLine, rejected int) {
	for _, c := range changes {
		switch {
		case c.Blocked != "":
		case rev.Rejected(c.Key()):
			rejected++
		default:
			keep = append(keep, c)
		}
	}
	return keep, rejected
}

// ReviewedText returns a page's final text after review: the corrected
// text when no correction was rejected, else the engine text with the
// standing changes made. rejected counts the rejected changes.
func ReviewedText(outDir string, p ledger.Page, rev ledger.Review) (text string, rejected int, err error) {
	changes, err := ChangesOf(outDir, p)
	if err != nil {
		return "", 0, err
	}
	keep, rejected := StandingChanges(changes, rev)
	name := finalText(p)
	if rejected > 0 {
		name = EngineText(p)
	}
	if name == "" {
		return "", 0, nil
	}
	data, err := os.ReadFile(filepath.Join(outDir, filepath.FromSlash(name)))
	if err != nil {
		return "", 0, err
	}
	if rejected == 0 {
		return string(data), 0, nil
	}
	text, _ = ApplyChanges(string(data), keep)
	return text, rejected, nil
}

// applyReview turns a report page into its reviewed form and, when some
// of its corrections were rejected, writes DIR/reviewed/<page>.txt and
// returns its path ("" otherwise).
func applyReview(p *report.Page, r ledger.Page, rev ledger.Review, outDir string) (string, error) {
	if r.State != ledger.StateDone {
		return "", nil // a page that failed since it was reviewed has no decision to replace
	}
	if rev.Decision != "" {
		why := "reviewed by " + rev.Who
		if rev.Note != "" {
			why += ": " + rev.Note
		}
		reasons := []string{why}
		if r.Decision != rev.Decision {
			t := "triage said " + r.Decision
			if len(r.Reasons) > 0 {
				t += " (" + strings.Join(r.Reasons, "; ") + ")"
			}
			reasons = append(reasons, t)
		} else {
			reasons = append(reasons, r.Reasons...)
		}
		p.Decision, p.Reasons, p.Reviewed, p.ReviewNote = rev.Decision, reasons, rev.Who, rev.Note
	}
	if len(rev.Corrections) == 0 {
		return "", nil
	}
	text, rejected, err := ReviewedText(outDir, r, rev)
	if err != nil {
		return "", fmt.Errorf("run: reviewed text of %q: %w", r.Rel, err)
	}
	if rejected == 0 {
		return "", nil
	}
	p.Corrections -= rejected
	if p.Reviewed == "" {
		p.Reviewed = rev.Who
	}
	stem := strings.TrimSuffix(strings.TrimPrefix(EngineText(r), ocrDir+"/"), ".txt")
	full := filepath.Join(outDir, filepath.FromSlash(path.Join(reviewedDir, stem+".txt")))
	if err := os.MkdirAll(filepath.Dir(full), 0o755); err != nil {
		return "", fmt.Errorf("run: %w", err)
	}
	if err := atomicfile.Write(full, []byte(text)); err != nil {
		return "", fmt.Errorf("run: %w", err)
	}
	return full, nil
}

// markRejected rewrites one page's change list with the changes rejected
// in review marked Blocked (BlockedReview), in the format AppendChanges
// writes.
func markRejected(data []byte, rev ledger.Review) ([]byte, error) {
	if len(rev.Corrections) == 0 {
		return data, nil
	}
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	sc := bufio.NewScanner(bytes.NewReader(data))
	sc.Buffer(make([]byte, 64<<10), 16<<20)
	for sc.Scan() {
		if len(bytes.TrimSpace(sc.Bytes())) == 0 {
			continue
		}
		var c ChangeLine
		if err := json.Unmarshal(sc.Bytes(), &c); err != nil {
			return nil, err
		}
		if c.Blocked == "" && rev.Rejected(c.Key()) {
			c.Blocked = BlockedReview
		}
		if err := enc.Encode(c); err != nil {
			return nil, err
		}
	}
	return buf.Bytes(), sc.Err()
}
