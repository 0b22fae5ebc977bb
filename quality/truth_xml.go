package quality

import (
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"regexp"
	"slices"
	"strconv"
	"strings"
)

// Ground truth in ALTO and PAGE XML.
//
// ALTO (Analyzed Layout and Text Object, Library of Congress / ALTO
// Editorial Board, schema versions 2 to 4; alto-4-4.xsd is vendored in
// testdata/standards): the page's text is the CONTENT of its String
// elements, a space between Strings (SP), a line end after each TextLine
// and a blank line after each TextBlock, the blocks in the order of the
// file's ReadingOrder where it gives one (ALTO 4.3 and later: ElementRef to
// blocks) and in document order otherwise. A word hyphenated at a line end
// is joined as the file marks it: a String with SUBS_TYPE HypPart1 and
// SUBS_CONTENT stands for the whole word, written once (its HypPart2 on the
// next line is left out); a line ending in HYP without SUBS_CONTENT joins
// its last String to the next line's first, without the hyphen.
//
// PAGE (Page Analysis and Ground-truth Elements, PRImA, Pletschacher and
// Antonacopoulos 2010; pagecontent namespaces 2010 to 2019,
// page-2019-07-15.xsd vendored in testdata/standards): the text of each
// TextRegion is its own TextEquiv/Unicode when not empty, else its
// TextLines' (one a line), else their Words' (spaces between); regions in
// the order of the file's ReadingOrder (OrderedGroup by @index,
// UnorderedGroup in document order), the regions it leaves out after them
// in document order. Of several TextEquiv the one with the lowest @index is
// used (the first when none has one).
//
// The XML must be UTF-8 (a declaration naming another encoding is
// refused); a DOCTYPE that declares entities or names an external DTD is
// refused: encoding/xml never fetches anything, and no entity is expanded.

var (
	altoNS = regexp.MustCompile(`^http://www\.loc\.gov/standards/alto/ns-v([234])#$`)
	pageNS = regexp.MustCompile(`^http://schema\.primaresearch\.org/PAGE/gts/pagecontent/(20[01][0-9])-[0-9]{2}-[0-9]{2}$`)
)

// xnode is an element of a parsed XML file.
type xnode struct {
	name  string // local name
	attr  map[string]string
	kids  []*xnode
	text  strings.Builder // character data directly inside
	order int             // position in document order
}

func (n *xnode) child(name string) *xnode {
	for _, k := range n.kids {
		if k.name == name {
			return k
		}
	}
	return nil
}

// truthFromXML detects ALTO or PAGE from the root element and returns the
// format and the page's text.
func truthFromXML(src string) (format, text string, err error) {
	root, ns, err := parseXML(src)
	if err != nil {
		return "", "", err
	}
	switch {
	case root.name == "alto":
		if !altoNS.MatchString(ns) {
			return "", "", fmt.Errorf("root element alto in namespace %q: not ALTO version 2, 3 or 4 (http://www.loc.gov/standards/alto/ns-v4#)", ns)
		}
		return FormatALTO, altoText(root), nil
	case root.name == "PcGts":
		m := pageNS.FindStringSubmatch(ns)
		if m == nil || m[1] < "2010" {
			return "", "", fmt.Errorf("root element PcGts in namespace %q: not a PAGE namespace of 2010 to 2019 (http://schema.primaresearch.org/PAGE/gts/pagecontent/2019-07-15)", ns)
		}
		return FormatPAGE, pageText(root), nil
	}
	return "", "", fmt.Errorf("unknown root element %q (namespace %q): ground truth in XML must be ALTO (alto) or PAGE (PcGts)", root.name, ns)
}

// parseXML parses src strictly into a tree, refusing entity declarations,
// external DTDs and encodings other than UTF-8.
func parseXML(src string) (*xnode, string, error) {
	d := xml.NewDecoder(strings.NewReader(src))
	d.Strict = true
	d.Entity = nil // only the five predefined entities and character references
	d.CharsetReader = func(label string, r io.Reader) (io.Reader, error) {
		switch strings.ToLower(label) {
		case "us-ascii", "ascii":
			return r, nil // ASCII is UTF-8; the bytes were checked before
		}
		return nil, fmt.Errorf("declares encoding %q: only UTF-8 is read (convert with iconv -f %s -t utf-8 and change the declaration)", label, label)
	}
	var (
		stack []*xnode
		root  *xnode
		ns    string
		n     int
	)
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			var se *xml.SyntaxError
			if errors.As(err, &se) {
				return nil, "", fmt.Errorf("malformed XML at line %d: %s", se.Line, se.Msg)
			}
			return nil, "", fmt.Errorf("malformed XML: %v", err)
		}
		switch t := tok.(type) {
		case xml.Directive:
			s := string(t)
			if strings.Contains(s, "ENTITY") {
				return nil, "", errors.New("declares entities in its DOCTYPE: refused (entities are never fetched or expanded)")
			}
			if f := strings.Fields(s); len(f) > 2 && strings.EqualFold(f[0], "DOCTYPE") && (f[2] == "SYSTEM" || f[2] == "PUBLIC") {
				return nil, "", errors.New("names an external DTD in its DOCTYPE: refused (nothing is ever fetched)")
			}
		case xml.StartElement:
			if root != nil && len(stack) == 0 {
				return nil, "", errors.New("malformed XML: more than one root element")
			}
			n++
			e := &xnode{name: t.Name.Local, order: n, attr: make(map[string]string, len(t.Attr))}
			for _, a := range t.Attr {
				if a.Name.Space == "" || a.Name.Space == t.Name.Space {
					e.attr[a.Name.Local] = a.Value
				}
			}
			if len(stack) == 0 {
				root, ns = e, t.Name.Space
			} else {
				p := stack[len(stack)-1]
				p.kids = append(p.kids, e)
			}
			stack = append(stack, e)
		case xml.EndElement:
			stack = stack[:len(stack)-1]
		case xml.CharData:
			if len(stack) > 0 {
				stack[len(stack)-1].text.Write(t)
			}
		}
	}
	if root == nil {
		return nil, "", errors.New("malformed XML: no root element")
	}
	return root, ns, nil
}

// walkNodes calls f on every element under n in document order (n included);
// f returns false to skip an element's children.
func walkNodes(n *xnode, f func(*xnode) bool) {
	if !f(n) {
		return
	}
	for _, k := range n.kids {
		walkNodes(k, f)
	}
}

// altoText returns the text of an ALTO file (see the package comment above).
func altoText(root *xnode) string {
	var blocks []*xnode
	byID := map[string]*xnode{}
	if layout := root.child("Layout"); layout != nil {
		walkNodes(layout, func(n *xnode) bool {
			if id := n.attr["ID"]; id != "" {
				byID[id] = n
			}
			if n.name == "TextBlock" {
				blocks = append(blocks, n)
			}
			return true
		})
	}
	// Blocks named by the reading order come first, in its order.
	var ordered []*xnode
	seen := map[*xnode]bool{}
	add := func(b *xnode) {
		if b != nil && !seen[b] {
			seen[b] = true
			ordered = append(ordered, b)
		}
	}
	if ro := root.child("ReadingOrder"); ro != nil {
		walkNodes(ro, func(n *xnode) bool {
			if n.name != "ElementRef" {
				return true
			}
			for _, id := range strings.Fields(n.attr["REF"]) {
				if e := byID[id]; e != nil {
					walkNodes(e, func(m *xnode) bool {
						if m.name == "TextBlock" {
							add(m)
							return false
						}
						return true
					})
				}
			}
			return false
		})
	}
	for _, b := range blocks {
		add(b)
	}

	var out strings.Builder
	skipNext := false // the next line's first String is a HypPart2 already written
	joinNext := false // the last line ended in HYP: no space before the next word
	for bi, b := range ordered {
		if bi > 0 {
			out.WriteString("\n\n")
		}
		for li, line := range textLines(b) {
			if li > 0 && !joinNext {
				out.WriteString("\n")
			}
			first := true
			joinNext = false
			for _, k := range line.kids {
				switch k.name {
				case "String":
					if first && skipNext && k.attr["SUBS_TYPE"] == "HypPart2" {
						skipNext, first = false, false
						continue
					}
					skipNext = false
					if o := out.String(); !first && o != "" && !strings.HasSuffix(o, " ") && !strings.HasSuffix(o, "\n") {
						out.WriteString(" ")
					}
					first = false
					if k.attr["SUBS_TYPE"] == "HypPart1" && k.attr["SUBS_CONTENT"] != "" {
						out.WriteString(k.attr["SUBS_CONTENT"])
						skipNext = true
						continue
					}
					out.WriteString(k.attr["CONTENT"])
				case "SP":
					if o := out.String(); !first && !strings.HasSuffix(o, " ") && !strings.HasSuffix(o, "\n") {
						out.WriteString(" ")
					}
				case "HYP":
					if !skipNext {
						joinNext = true
					}
				}
			}
		}
	}
	return out.String()
}

// textLines returns the TextLines of a block in document order.
func textLines(b *xnode) []*xnode {
	var out []*xnode
	for _, k := range b.kids {
		if k.name == "TextLine" {
			out = append(out, k)
		}
	}
	return out
}

// pageText returns the text of a PAGE file (see the package comment above).
func pageText(root *xnode) string {
	page := root.child("Page")
	if page == nil {
		return ""
	}
	var regions []*xnode
	byID := map[string]*xnode{}
	walkNodes(page, func(n *xnode) bool {
		if n.name == "TextRegion" {
			regions = append(regions, n)
			if id := n.attr["id"]; id != "" {
				byID[id] = n
			}
		}
		return true
	})
	var ordered []*xnode
	seen := map[*xnode]bool{}
	add := func(r *xnode) {
		if r != nil && !seen[r] {
			seen[r] = true
			ordered = append(ordered, r)
		}
	}
	var group func(g *xnode)
	group = func(g *xnode) {
		kids := slices.Clone(g.kids)
		if strings.HasPrefix(g.name, "OrderedGroup") {
			slices.SortStableFunc(kids, func(a, b *xnode) int { return pageIndex(a) - pageIndex(b) })
		}
		for _, k := range kids {
			switch {
			case strings.HasPrefix(k.name, "RegionRef"):
				add(byID[k.attr["regionRef"]])
			case strings.HasPrefix(k.name, "OrderedGroup"), strings.HasPrefix(k.name, "UnorderedGroup"):
				add(byID[k.attr["regionRef"]]) // a group may name a region of its own
				group(k)
			}
		}
	}
	if ro := page.child("ReadingOrder"); ro != nil {
		for _, g := range ro.kids {
			group(g)
		}
	}
	for _, r := range regions {
		add(r)
	}
	parts := make([]string, 0, len(ordered))
	for _, r := range ordered {
		if t := regionText(r); t != "" {
			parts = append(parts, t)
		}
	}
	return strings.Join(parts, "\n\n")
}

// pageIndex is the @index of an indexed reading-order element.
func pageIndex(n *xnode) int {
	i, err := strconv.Atoi(n.attr["index"])
	if err != nil {
		return 1 << 30
	}
	return i
}

// textEquiv returns the Unicode of n's TextEquiv with the lowest @index.
func textEquiv(n *xnode) string {
	var best *xnode
	for _, k := range n.kids {
		if k.name == "TextEquiv" && (best == nil || pageIndex(k) < pageIndex(best)) {
			best = k
		}
	}
	if best == nil {
		return ""
	}
	if u := best.child("Unicode"); u != nil {
		return u.text.String()
	}
	return ""
}

func regionText(r *xnode) string {
	if t := textEquiv(r); strings.TrimSpace(t) != "" {
		return t
	}
	var lines []string
	for _, l := range r.kids {
		if l.name != "TextLine" {
			continue
		}
		t := textEquiv(l)
		if strings.TrimSpace(t) == "" {
			var words []string
			for _, w := range l.kids {
				if w.name == "Word" {
					if wt := textEquiv(w); wt != "" {
						words = append(words, wt)
					}
				}
			}
			t = strings.Join(words, " ")
		}
		if t != "" {
			lines = append(lines, t)
		}
	}
	return strings.Join(lines, "\n")
}
