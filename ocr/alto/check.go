package alto

import (
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
	"unicode"
)

// CheckError describes the first rule of the ALTO 4.2 schema that a
// document breaks, with the path of the offending element.
type CheckError struct {
	Path string // e.g. "alto/Layout/Page/PrintSpace/TextBlock[2]"
	Msg  string
}

func (e *CheckError) Error() string { return "alto: " + e.Path + ": " + e.Msg }

// Check reads an ALTO document and reports the first way in which it breaks
// the ALTO 4.2 schema, for the part of the schema that text pages use: the
// root and its child order, Description (MeasurementUnit first, one of
// pixel, mm10, inch1200; Processing needs an ID), Layout (at least one
// Page with ID and PHYSICAL_IMG_NR), the order of Page's children,
// PrintSpace blocks, TextBlock (ID required) and TextLine content (one or
// more String, each optionally followed by SP, then an optional HYP),
// String (CONTENT required; children Shape, ALTERNATIVE, Glyph in that
// order), the attributes each of these may carry, xsd:float values of
// positions, WC and PC within [0, 1], and unique, well-formed IDs.
//
// It is a structural check written from the schema text, not a full XML
// Schema validator: elements the writer never produces (Styles, Tags,
// Illustration content, Glyph content) are accepted without inspection.
func Check(r io.Reader) error {
	root, err := parse(r)
	if err != nil {
		return err
	}
	c := checker{ids: map[string]bool{}}
	c.alto(root)
	return c.err
}

type node struct {
	name     xml.Name
	attr     map[string]string
	kids     []*node
	text     strings.Builder
	path     string
	ordinal  int
	hasChars bool
}

func parse(r io.Reader) (*node, error) {
	d := xml.NewDecoder(r)
	var stack []*node
	var root *node
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("alto: not well-formed XML: %w", err)
		}
		switch t := tok.(type) {
		case xml.StartElement:
			n := &node{name: t.Name, attr: map[string]string{}}
			for _, a := range t.Attr {
				if a.Name.Space == "" && a.Name.Local != "xmlns" {
					n.attr[a.Name.Local] = a.Value
				}
			}
			if len(stack) == 0 {
				if root != nil {
					return nil, errors.New("alto: more than one root element")
				}
				root = n
				n.path = t.Name.Local
			} else {
				p := stack[len(stack)-1]
				same := 1
				for _, k := range p.kids {
					if k.name.Local == t.Name.Local {
						same++
					}
				}
				n.ordinal = same
				n.path = p.path + "/" + t.Name.Local
				if same > 1 {
					n.path += "[" + strconv.Itoa(same) + "]"
				}
				p.kids = append(p.kids, n)
			}
			stack = append(stack, n)
		case xml.EndElement:
			stack = stack[:len(stack)-1]
		case xml.CharData:
			if len(stack) > 0 {
				top := stack[len(stack)-1]
				top.text.Write(t)
				if strings.TrimSpace(string(t)) != "" {
					top.hasChars = true
				}
			}
		}
	}
	if root == nil {
		return nil, errors.New("alto: no root element")
	}
	return root, nil
}

type checker struct {
	err error
	ids map[string]bool
}

func (c *checker) fail(n *node, format string, args ...any) {
	if c.err == nil {
		c.err = &CheckError{Path: n.path, Msg: fmt.Sprintf(format, args...)}
	}
}

// seq checks that n's children follow the pattern of (name, min, max)
// items, in order; max < 0 means unbounded. It returns the children
// matched by each item.
func (c *checker) seq(n *node, items ...item) [][]*node {
	out := make([][]*node, len(items))
	i := 0
	for j, it := range items {
		for i < len(n.kids) && it.match(n.kids[i]) && (it.max < 0 || len(out[j]) < it.max) {
			out[j] = append(out[j], n.kids[i])
			i++
		}
		if len(out[j]) < it.min {
			c.fail(n, "expected %s", it.names[0])
			return out
		}
	}
	if i < len(n.kids) {
		c.fail(n.kids[i], "element not allowed here")
	}
	for _, k := range n.kids {
		if k.name.Space != Namespace {
			c.fail(k, "element in namespace %q, want %q", k.name.Space, Namespace)
		}
	}
	return out
}

type item struct {
	names    []string
	min, max int
}

func (it item) match(n *node) bool {
	for _, s := range it.names {
		if n.name.Local == s {
			return true
		}
	}
	return false
}

func one(name string) item      { return item{[]string{name}, 1, 1} }
func opt(name string) item      { return item{[]string{name}, 0, 1} }
func many(names ...string) item { return item{names, 0, -1} }

// attrs checks that n carries every required attribute, only allowed
// ones, xsd:float values where the schema asks for them, and well-formed
// unique IDs.
func (c *checker) attrs(n *node, required, optional []string) {
	for _, a := range required {
		if _, ok := n.attr[a]; !ok {
			c.fail(n, "missing required attribute %s", a)
		}
	}
	for a, v := range n.attr {
		if !contains(required, a) && !contains(optional, a) {
			c.fail(n, "attribute %s not allowed", a)
		}
		switch a {
		case "HPOS", "VPOS", "WIDTH", "HEIGHT", "PHYSICAL_IMG_NR", "ROTATION":
			if !isFloat(v) {
				c.fail(n, "%s=%q is not an xsd:float", a, v)
			}
		case "WC", "PC":
			f, err := strconv.ParseFloat(v, 32)
			if !isFloat(v) || err != nil || f < 0 || f > 1 {
				c.fail(n, "%s=%q is not a float in [0, 1]", a, v)
			}
		case "ID":
			if !isNCName(v) {
				c.fail(n, "ID %q is not an XML name", v)
			}
			if c.ids[v] {
				c.fail(n, "ID %q used twice", v)
			}
			c.ids[v] = true
		}
	}
}

func (c *checker) alto(n *node) {
	if n.name.Local != "alto" || n.name.Space != Namespace {
		c.fail(n, "root element is {%s}%s, want {%s}alto", n.name.Space, n.name.Local, Namespace)
		return
	}
	c.attrs(n, nil, []string{"SCHEMAVERSION"})
	parts := c.seq(n, opt("Description"), opt("Styles"), opt("Tags"), one("Layout"))
	if c.err != nil {
		return
	}
	for _, d := range parts[0] {
		c.description(d)
	}
	for _, l := range parts[3] {
		c.layout(l)
	}
}

func (c *checker) description(n *node) {
	parts := c.seq(n, one("MeasurementUnit"), opt("sourceImageInformation"), many("OCRProcessing"), many("Processing"))
	if c.err != nil {
		return
	}
	mu := strings.TrimSpace(parts[0][0].text.String())
	if mu != "pixel" && mu != "mm10" && mu != "inch1200" {
		c.fail(parts[0][0], "MeasurementUnit %q is not pixel, mm10 or inch1200", mu)
	}
	for _, s := range parts[1] {
		c.seq(s, opt("fileName"), many("fileIdentifier"), many("documentIdentifier"))
	}
	for _, p := range parts[3] {
		c.attrs(p, []string{"ID"}, nil)
		sub := c.seq(p, opt("processingCategory"), opt("processingDateTime"), opt("processingAgency"),
			many("processingStepDescription"), opt("processingStepSettings"), opt("processingSoftware"))
		if c.err != nil {
			return
		}
		for _, cat := range sub[0] {
			for _, v := range strings.Fields(cat.text.String()) {
				if !contains([]string{"contentGeneration", "contentModification", "preOperation", "postOperation", "other"}, v) {
					c.fail(cat, "processingCategory %q not in the schema's list", v)
				}
			}
		}
		for _, sw := range sub[5] {
			c.seq(sw, opt("softwareCreator"), opt("softwareName"), opt("softwareVersion"), opt("applicationDescription"))
		}
	}
}

func (c *checker) layout(n *node) {
	c.attrs(n, nil, []string{"STYLEREFS"})
	parts := c.seq(n, item{[]string{"Page"}, 1, -1})
	for _, p := range parts[0] {
		if c.err != nil {
			return
		}
		c.attrs(p, []string{"ID", "PHYSICAL_IMG_NR"}, []string{"PAGECLASS", "STYLEREFS", "PROCESSINGREFS", "HEIGHT", "WIDTH",
			"PRINTED_IMG_NR", "QUALITY", "QUALITY_DETAIL", "POSITION", "PROCESSING", "ACCURACY", "PC", "LANG", "ROTATION", "OTHERLANGS"})
		sp := c.seq(p, opt("TopMargin"), opt("LeftMargin"), opt("RightMargin"), opt("BottomMargin"), opt("PrintSpace"))
		if c.err != nil {
			return
		}
		for _, group := range sp {
			for _, s := range group {
				c.pageSpace(s)
			}
		}
	}
}

var blockAttrs = []string{"STYLEREFS", "TAGREFS", "PROCESSINGREFS", "HEIGHT", "WIDTH", "HPOS", "VPOS", "ROTATION", "IDNEXT", "CS"}

func (c *checker) pageSpace(n *node) {
	c.attrs(n, nil, []string{"ID", "STYLEREFS", "PROCESSINGREFS", "HEIGHT", "WIDTH", "HPOS", "VPOS"})
	parts := c.seq(n, opt("Shape"), many("TextBlock", "Illustration", "GraphicalElement", "ComposedBlock"))
	if c.err != nil {
		return
	}
	c.blocks(parts[1])
}

func (c *checker) blocks(bs []*node) {
	for _, b := range bs {
		switch b.name.Local {
		case "TextBlock":
			c.attrs(b, []string{"ID"}, append(blockAttrs, "language", "LANG", "BASEDIRECTION"))
			parts := c.seq(b, opt("Shape"), many("TextLine"))
			for _, l := range parts[1] {
				c.textLine(l)
			}
		case "ComposedBlock":
			c.attrs(b, []string{"ID"}, append(blockAttrs, "TYPE", "FILEID"))
			parts := c.seq(b, opt("Shape"), many("TextBlock", "Illustration", "GraphicalElement", "ComposedBlock"))
			c.blocks(parts[1])
		default:
			c.attrs(b, []string{"ID"}, append(blockAttrs, "TYPE", "FILEID"))
		}
		if c.err != nil {
			return
		}
	}
}

func (c *checker) textLine(n *node) {
	c.attrs(n, nil, []string{"ID", "STYLEREFS", "TAGREFS", "PROCESSINGREFS", "HEIGHT", "WIDTH", "HPOS", "VPOS", "BASELINE", "LANG", "CS", "BASEDIRECTION"})
	i := 0
	if i < len(n.kids) && n.kids[i].name.Local == "Shape" {
		i++
	}
	strs := 0
	for i < len(n.kids) && n.kids[i].name.Local == "String" {
		c.str(n.kids[i])
		strs++
		i++
		if i < len(n.kids) && n.kids[i].name.Local == "SP" {
			c.attrs(n.kids[i], nil, []string{"ID", "HEIGHT", "WIDTH", "HPOS", "VPOS"})
			if len(n.kids[i].kids) > 0 || n.kids[i].hasChars {
				c.fail(n.kids[i], "SP must be empty")
			}
			i++
		}
	}
	if strs == 0 {
		c.fail(n, "a TextLine needs at least one String")
		return
	}
	if i < len(n.kids) && n.kids[i].name.Local == "HYP" {
		c.attrs(n.kids[i], []string{"CONTENT"}, []string{"HEIGHT", "WIDTH", "HPOS", "VPOS"})
		i++
	}
	if i < len(n.kids) {
		c.fail(n.kids[i], "element not allowed here")
	}
}

func (c *checker) str(n *node) {
	c.attrs(n, []string{"CONTENT"}, []string{"ID", "STYLEREFS", "TAGREFS", "PROCESSINGREFS", "HEIGHT", "WIDTH", "HPOS", "VPOS",
		"STYLE", "SUBS_TYPE", "SUBS_CONTENT", "WC", "CC", "CS", "LANG"})
	if n.hasChars {
		c.fail(n, "String has text content; the schema says mixed=\"false\"")
	}
	c.seq(n, opt("Shape"), many("ALTERNATIVE"), many("Glyph"))
	for _, k := range n.kids {
		if k.name.Local == "ALTERNATIVE" {
			c.attrs(k, nil, []string{"PURPOSE"})
			if len(k.kids) > 0 {
				c.fail(k, "ALTERNATIVE holds text only")
			}
		}
	}
}

func contains(list []string, s string) bool {
	for _, v := range list {
		if v == s {
			return true
		}
	}
	return false
}

// isFloat reports whether s is an xsd:float literal (decimal or
// exponent notation, INF, -INF, NaN; XML Schema Part 2, 3.2.4).
func isFloat(s string) bool {
	s = strings.TrimSpace(s)
	switch s {
	case "INF", "-INF", "NaN":
		return true
	case "", "+INF", "inf", "Inf", "nan":
		return false
	}
	_, err := strconv.ParseFloat(s, 64)
	if err != nil {
		return false
	}
	// Go accepts forms xsd:float does not: hex, underscores, "Infinity".
	for _, r := range s {
		if !strings.ContainsRune("0123456789+-.eE", r) {
			return false
		}
	}
	return true
}

// isNCName reports whether s is an XML non-colonised name (Namespaces in
// XML 1.0, production NCName), checked for the ASCII-and-letters subset.
func isNCName(s string) bool {
	if s == "" {
		return false
	}
	for i, r := range s {
		switch {
		case r == '_' || unicode.IsLetter(r):
		case i > 0 && (r == '-' || r == '.' || unicode.IsDigit(r)):
		default:
			return false
		}
	}
	return true
}
