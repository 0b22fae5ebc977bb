package ocr

// GreyWhenClean lets the external tests measure automatic preparation with
// and without the grey hand-over of evenly lit, low-noise pages.
var GreyWhenClean = &greyWhenClean

// DamagedData is damagedData, for decode_pdf_test.go.
var DamagedData = damagedData
