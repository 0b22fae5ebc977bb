package ocr

import (
	"image"
	"image/color"
)

// toGray converts src to a new *image.Gray with its origin at (0, 0), using
// the ITU-R BT.601 luma weights of color.GrayModel. Transparent pixels are
// composited over white, the colour of paper. src is never modified.
//
// Common decoder outputs take fast paths over Pix/Stride; anything else goes
// through the generic color.Color path.
func toGray(src image.Image) *image.Gray {
	b := src.Bounds()
	w, h := b.Dx(), b.Dy()
	dst := image.NewGray(image.Rect(0, 0, w, h))
	switch s := src.(type) {
	case *image.Gray:
		for y := 0; y < h; y++ {
			i := s.PixOffset(b.Min.X, b.Min.Y+y)
			copy(dst.Pix[y*dst.Stride:y*dst.Stride+w], s.Pix[i:i+w])
		}
	case *image.Gray16:
		for y := 0; y < h; y++ {
			i := s.PixOffset(b.Min.X, b.Min.Y+y)
			row := dst.Pix[y*dst.Stride : y*dst.Stride+w]
			for x := range row {
				row[x] = s.Pix[i+2*x]
			}
		}
	case *image.YCbCr:
		// The Y plane is the luma already.
		for y := 0; y < h; y++ {
			i := s.YOffset(b.Min.X, b.Min.Y+y)
			copy(dst.Pix[y*dst.Stride:y*dst.Stride+w], s.Y[i:i+w])
		}
	case *image.RGBA:
		for y := 0; y < h; y++ {
			i := s.PixOffset(b.Min.X, b.Min.Y+y)
			row := dst.Pix[y*dst.Stride : y*dst.Stride+w]
			for x := range row {
				p := s.Pix[i+4*x : i+4*x+4 : i+4*x+4]
				// Premultiplied: add the white showing through.
				white := 255 - uint32(p[3])
				r, g, bl := uint32(p[0])+white, uint32(p[1])+white, uint32(p[2])+white
				row[x] = luma8(r, g, bl)
			}
		}
	case *image.NRGBA:
		for y := 0; y < h; y++ {
			i := s.PixOffset(b.Min.X, b.Min.Y+y)
			row := dst.Pix[y*dst.Stride : y*dst.Stride+w]
			for x := range row {
				p := s.Pix[i+4*x : i+4*x+4 : i+4*x+4]
				a := uint32(p[3])
				if a == 255 {
					row[x] = luma8(uint32(p[0]), uint32(p[1]), uint32(p[2]))
					continue
				}
				white := 255 * (255 - a)
				r := (uint32(p[0])*a + white + 127) / 255
				g := (uint32(p[1])*a + white + 127) / 255
				bl := (uint32(p[2])*a + white + 127) / 255
				row[x] = luma8(r, g, bl)
			}
		}
	case *image.Paletted:
		var lut [256]uint8
		for i := range lut {
			lut[i] = 255 // indices past the palette read as paper
		}
		for i, c := range s.Palette {
			if i < len(lut) {
				lut[i] = grayOverWhite(c)
			}
		}
		for y := 0; y < h; y++ {
			i := s.PixOffset(b.Min.X, b.Min.Y+y)
			row := dst.Pix[y*dst.Stride : y*dst.Stride+w]
			for x := range row {
				row[x] = lut[s.Pix[i+x]]
			}
		}
	default:
		for y := 0; y < h; y++ {
			row := dst.Pix[y*dst.Stride : y*dst.Stride+w]
			for x := range row {
				row[x] = grayOverWhite(src.At(b.Min.X+x, b.Min.Y+y))
			}
		}
	}
	return dst
}

// luma8 is color.GrayModel's weighting for 8-bit channels.
func luma8(r, g, b uint32) uint8 {
	return uint8((19595*r + 38470*g + 7471*b + 1<<15) >> 16)
}

// grayOverWhite converts any colour to 8-bit grey, compositing over white.
func grayOverWhite(c color.Color) uint8 {
	r, g, b, a := c.RGBA() // premultiplied, 16-bit
	white := 0xffff - a
	r, g, b = r+white, g+white, b+white
	return uint8((19595*r + 38470*g + 7471*b + 1<<15) >> 24)
}
