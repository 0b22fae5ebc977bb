// Package alto writes page records as ALTO v4 XML (schema version 4.4) and
// checks ALTO documents against the structural rules of the schema.
//
// ALTO (Analyzed Layout and Text Object) is the Library of Congress
// standard for OCR text with layout; the schema is published at
// http://www.loc.gov/standards/alto/v4/alto-4-4.xsd (ALTO Editorial Board,
// ALTO XML Schema version 4.4, 2023, CC BY-SA 4.0; vendored in
// testdata/standards). The tests validate every kind of document written
// with xmllint against that schema.
//
// Coordinates are pixels of the original page image (MeasurementUnit
// "pixel"), origin at its top left; WC is the word confidence in [0, 1].
package alto

import (
	"io"

	"recto/ocr"
)

// Namespace and SchemaLocation are written on the root element.
const (
	Namespace      = ocr.ALTONamespace
	SchemaLocation = ocr.ALTOSchemaLocation
)

// Write writes rec as an ALTO v4 document: one Page with a PrintSpace,
// a TextBlock per block, a TextLine per line and a String per word (with
// SP between words), in reading order. Word.Alt becomes ALTERNATIVE
// elements, most likely first. The output carries no date, so equal records
// give byte-identical documents.
func Write(w io.Writer, rec *ocr.Record) error { return ocr.WriteALTO(w, rec) }

// Options and Step add the quality estimate (Page@ACCURACY) and the
// correction step to the document; see ocr.WriteALTOWith.
type (
	Options = ocr.ALTOOptions
	Step    = ocr.ALTOStep
)

// WriteWith is Write with the quality estimate and the correction step;
// see ocr.WriteALTOWith for where each goes.
func WriteWith(w io.Writer, rec *ocr.Record, o Options) error { return ocr.WriteALTOWith(w, rec, o) }
