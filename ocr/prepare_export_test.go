package ocr

import "image"

// GreyWhenClean lets the external tests measure automatic preparation with
// and without the grey hand-over of evenly lit, low-noise pages.
var GreyWhenClean = &greyWhenClean

// DamagedData is damagedData, for decode_pdf_test.go.
var DamagedData = damagedData

// TurnedTwoWays measures the ink of img, thresholded at Otsu's level, on
// the page turned a quarter (index 0) and on the turned page turned back
// (index 1), each in two ways: from the marks of the page before turning
// (turnMarks, as measureInk does) and by labelling the turned page anew.
func TurnedTwoWays(img image.Image) (fromMarks, relabelled [2]InkShape) {
	g := toGray(img)
	w, h := g.Rect.Dx(), g.Rect.Dy()
	b := image.NewGray(image.Rect(0, 0, w, h))
	threshold(b, g, otsu(histogram(g)))
	bt := transposed(b)
	var runs []run
	fromMarks[0] = measureMarks(turnMarks(inkMarks(b, &runs)), w, minXHeight)
	relabelled[0] = measureMarks(inkMarks(bt, &runs), w, minXHeight)
	fromMarks[1] = measureMarks(turnMarks(inkMarks(bt, &runs)), h, minXHeight)
	relabelled[1] = measureMarks(inkMarks(b, &runs), h, minXHeight)
	return fromMarks, relabelled
}

// transposed returns b mirrored about its diagonal: rows become columns,
// so that lines running up or down the page run across it (the order of
// the letters along a line does not matter to the measure).
func transposed(b *image.Gray) *image.Gray {
	w, h := b.Rect.Dx(), b.Rect.Dy()
	o := image.NewGray(image.Rect(0, 0, h, w))
	for y := 0; y < h; y++ {
		for x, v := range b.Pix[y*b.Stride : y*b.Stride+w] {
			o.Pix[x*o.Stride+y] = v
		}
	}
	return o
}
