// Package alto writes page records as ALTO v4 XML and checks ALTO
// documents against the structural rules of the ALTO 4.2 schema.
//
// ALTO (Analyzed Layout and Text Object) is the Library of Congress
// standard for OCR text with layout; the schema is published at
// http://www.loc.gov/standards/alto/v4/alto-4-2.xsd (ALTO Editorial Board,
// ALTO XML Schema version 4.2, 2020, CC BY-SA 4.0).
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
