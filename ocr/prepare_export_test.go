package ocr

// GreyWhenClean lets the external tests measure automatic preparation with
// and without the grey hand-over of evenly lit, low-noise pages.
var GreyWhenClean = &greyWhenClean
