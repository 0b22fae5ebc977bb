package ocr

import (
	"bytes"
	"encoding/binary"
	"errors"
	"image"
	"io"
	"math"
	"strconv"
)

// isPNMSpace reports the whitespace of a Netpbm header.
func isPNMSpace(c byte) bool {
	return c == ' ' || c == '\t' || c == '\n' || c == '\r' || c == '\v' || c == '\f'
}

// pnmConfig reads the width and height of a PBM, PGM or PPM header
// (Netpbm pbm(5), pgm(5), ppm(5): magic, whitespace, width, height, with
// '#' comments to the end of the line).
func pnmConfig(data []byte) (image.Config, error) {
	p := data[2:]
	var vals []int
	for len(vals) < 2 {
		for len(p) > 0 && (isPNMSpace(p[0]) || p[0] == '#') {
			if p[0] == '#' {
				i := bytes.IndexAny(p, "\r\n")
				if i < 0 {
					return image.Config{}, io.ErrUnexpectedEOF
				}
				p = p[i:]
				continue
			}
			p = p[1:]
		}
		i := 0
		for i < len(p) && p[i] >= '0' && p[i] <= '9' {
			i++
		}
		if i == 0 || i > 9 {
			if len(p) == 0 {
				return image.Config{}, io.ErrUnexpectedEOF
			}
			return image.Config{}, errors.New("pnm: bad header")
		}
		v, _ := strconv.Atoi(string(p[:i]))
		vals = append(vals, v)
		p = p[i:]
	}
	return image.Config{Width: vals[0], Height: vals[1]}, nil
}

// jp2Boxes calls fn for each box of a JPEG 2000 file (ISO/IEC 15444-1:2019,
// annex I: length, type, contents; length 1 means a 64-bit length follows,
// 0 means to the end) in data; superboxes are entered when fn returns true.
func jp2Boxes(data []byte, fn func(typ string, body []byte) bool) {
	for len(data) >= 8 {
		n := uint64(binary.BigEndian.Uint32(data[0:4]))
		typ := string(data[4:8])
		hdr := uint64(8)
		switch n {
		case 0:
			n = uint64(len(data))
		case 1:
			if len(data) < 16 {
				return
			}
			n, hdr = binary.BigEndian.Uint64(data[8:16]), 16
		}
		if n < hdr || n > uint64(len(data)) {
			return
		}
		if fn(typ, data[hdr:n]) {
			jp2Boxes(data[hdr:n], fn)
		}
		data = data[n:]
	}
}

// jp2Config reads the size of a JPEG 2000 image: the ihdr box of a JP2
// file (ISO/IEC 15444-1 I.5.3.1: height, then width) or the SIZ marker
// segment of a raw codestream (A.5.1: Xsiz, Ysiz, XOsiz, YOsiz).
func jp2Config(data []byte) (image.Config, error) {
	if bytes.HasPrefix(data, []byte("\xff\x4f\xff\x51")) {
		if len(data) < 4+2+2+16 {
			return image.Config{}, io.ErrUnexpectedEOF
		}
		s := data[6:]
		xs, ys := binary.BigEndian.Uint32(s[2:6]), binary.BigEndian.Uint32(s[6:10])
		xo, yo := binary.BigEndian.Uint32(s[10:14]), binary.BigEndian.Uint32(s[14:18])
		if xo > xs || yo > ys || xs-xo > math.MaxInt32 || ys-yo > math.MaxInt32 {
			return image.Config{}, errors.New("jp2: bad SIZ marker")
		}
		return image.Config{Width: int(xs - xo), Height: int(ys - yo)}, nil
	}
	var cfg image.Config
	found := false
	jp2Boxes(data, func(typ string, body []byte) bool {
		switch typ {
		case "jp2h":
			return true
		case "ihdr":
			if len(body) >= 8 && !found {
				h, w := binary.BigEndian.Uint32(body[0:4]), binary.BigEndian.Uint32(body[4:8])
				if h <= math.MaxInt32 && w <= math.MaxInt32 {
					cfg.Width, cfg.Height, found = int(w), int(h), true
				}
			}
		}
		return false
	})
	if !found {
		return cfg, errors.New("jp2: no image header box")
	}
	return cfg, nil
}

// jp2DPI reads the horizontal capture resolution (resc), else the display
// resolution (resd), of a JP2 file's res box (ISO/IEC 15444-1 I.5.3.7:
// VRcN, VRcD, HRcN, HRcD as 16-bit values, VRcE, HRcE as signed exponents,
// in grid points per metre).
func jp2DPI(data []byte) float64 {
	var capture, display float64
	jp2Boxes(data, func(typ string, body []byte) bool {
		switch typ {
		case "jp2h", "res ":
			return true
		case "resc", "resd":
			if len(body) < 10 {
				return false
			}
			num, den := float64(binary.BigEndian.Uint16(body[4:6])), float64(binary.BigEndian.Uint16(body[6:8]))
			exp := float64(int8(body[9]))
			if den == 0 {
				return false
			}
			dpi := num / den * math.Pow(10, exp) * 0.0254
			if typ == "resc" {
				capture = dpi
			} else {
				display = dpi
			}
		}
		return false
	})
	if capture > 0 {
		return capture
	}
	return display
}

// bmpDPI reads biXPelsPerMeter of a BMP info header (Microsoft,
// BITMAPINFOHEADER; at byte 38 of the file), 0 when absent.
func bmpDPI(data []byte) float64 {
	if len(data) < 42 || binary.LittleEndian.Uint32(data[14:18]) < 40 {
		return 0
	}
	ppm := int32(binary.LittleEndian.Uint32(data[38:42]))
	if ppm <= 0 {
		return 0
	}
	return math.Round(float64(ppm)*0.0254*100) / 100
}

// exifDPI reads XResolution and ResolutionUnit from the first IFD of a JPEG
// file's EXIF APP1 segment (JEITA CP-3451, Exif 2.3, 2010, sections 4.5 and
// 4.6.4: a TIFF structure after "Exif\0\0"), 0 when absent.
func exifDPI(data []byte) float64 {
	seg := jpegSegment(data, 0xe1, "Exif\x00\x00")
	if len(seg) <= 14 {
		return 0
	}
	t := seg[6:]
	if !bytes.HasPrefix(t, []byte("II*\x00")) && !bytes.HasPrefix(t, []byte("MM\x00*")) {
		return 0
	}
	var bo binary.ByteOrder = binary.LittleEndian
	if t[0] == 'M' {
		bo = binary.BigEndian
	}
	ifd, _, err := readIFD(bytes.NewReader(t), int64(len(t)), bo, int64(bo.Uint32(t[4:8])))
	if err != nil {
		return 0
	}
	if ifd.dpi == 72 {
		// 72 dpi is the Exif default (Exif 2.3, 4.6.4 A), which
		// cameras write whatever the subject: not a scan's
		// resolution (common practice).
		return 0
	}
	return ifd.dpi
}
