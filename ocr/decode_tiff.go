package ocr

import (
	"encoding/binary"
	"errors"
	"fmt"
	"image"
	"io"
)

// maxTIFFPages bounds the IFD chain that readTIFFIFDs follows.
const maxTIFFPages = 100_000

// tiffIFD is what readTIFFIFDs reads from one image file directory (one
// page) of a TIFF file.
type tiffIFD struct {
	offset        int64   // of the IFD in the file
	width, height int     // ImageWidth, ImageLength
	bps, spp      int     // BitsPerSample (first value), SamplesPerPixel
	compression   int     // Compression (1 if absent)
	photometric   int     // PhotometricInterpretation (-1 if absent)
	t4Options     int     // T4Options
	tiled         bool    // has TileWidth
	dpi           float64 // from XResolution and ResolutionUnit; 0 if absent or unit-less
	subfile       int     // NewSubfileType
}

// readTIFFIFDs reads every IFD of a TIFF file through r (size bytes long),
// following TIFF 6.0 (Adobe 1992), sections 2, 8 and 11, reading only the
// directories, never the image data. A chain that loops or leaves the file
// after the first page ends the list (the pages before it are kept); an
// unreadable first IFD is an error. Reduced-resolution images
// (NewSubfileType bit 0: thumbnails) are not pages and are left out.
func readTIFFIFDs(r io.ReaderAt, size int64) ([]tiffIFD, error) {
	var hdr [8]byte
	if _, err := r.ReadAt(hdr[:], 0); err != nil {
		return nil, io.ErrUnexpectedEOF
	}
	var bo binary.ByteOrder = binary.LittleEndian
	if hdr[0] == 'M' {
		bo = binary.BigEndian
	}
	off := int64(bo.Uint32(hdr[4:8]))
	seen := map[int64]bool{}
	var ifds []tiffIFD
	for off != 0 && len(seen) < maxTIFFPages && !seen[off] {
		seen[off] = true
		ifd, next, err := readIFD(r, size, bo, off)
		if err != nil {
			if len(ifds) == 0 {
				return nil, err
			}
			break
		}
		if ifd.subfile&1 == 0 || len(seen) == 1 {
			ifds = append(ifds, ifd)
		}
		off = next
	}
	if len(ifds) == 0 {
		return nil, errors.New("tiff: no image file directory")
	}
	return ifds, nil
}

// readIFD reads the IFD at off and returns it and the next IFD's offset.
func readIFD(r io.ReaderAt, size int64, bo binary.ByteOrder, off int64) (tiffIFD, int64, error) {
	ifd := tiffIFD{offset: off, compression: 1, photometric: -1, bps: 1, spp: 1}
	var nb [2]byte
	if off < 8 || off+2 > size {
		return ifd, 0, fmt.Errorf("tiff: IFD offset %d outside the file", off)
	}
	if _, err := r.ReadAt(nb[:], off); err != nil {
		return ifd, 0, io.ErrUnexpectedEOF
	}
	n := int64(bo.Uint16(nb[:]))
	if off+2+12*n+4 > size {
		return ifd, 0, io.ErrUnexpectedEOF
	}
	buf := make([]byte, 12*n+4)
	if _, err := r.ReadAt(buf, off+2); err != nil {
		return ifd, 0, io.ErrUnexpectedEOF
	}
	var xres float64
	unit := 2 // inch is the default
	for i := int64(0); i < n; i++ {
		e := buf[12*i : 12*i+12]
		tag, typ, count := bo.Uint16(e[0:2]), bo.Uint16(e[2:4]), bo.Uint32(e[4:8])
		// first returns the first SHORT or LONG value; values that do not
		// fit the entry are read from their offset.
		first := func() int {
			switch {
			case typ == 3 && count <= 2:
				return int(bo.Uint16(e[8:10]))
			case typ == 4 && count <= 1:
				return int(bo.Uint32(e[8:12]))
			case typ == 3 || typ == 4:
				var v [4]byte
				if _, err := r.ReadAt(v[:], int64(bo.Uint32(e[8:12]))); err != nil {
					return 0
				}
				if typ == 3 {
					return int(bo.Uint16(v[:2]))
				}
				return int(bo.Uint32(v[:]))
			}
			return 0
		}
		switch tag {
		case 254: // NewSubfileType
			ifd.subfile = first()
		case 256: // ImageWidth
			ifd.width = first()
		case 257: // ImageLength
			ifd.height = first()
		case 258: // BitsPerSample
			ifd.bps = first()
		case 259: // Compression
			ifd.compression = first()
		case 262: // PhotometricInterpretation
			ifd.photometric = first()
		case 277: // SamplesPerPixel
			ifd.spp = first()
		case 282: // XResolution, RATIONAL
			if typ != 5 {
				continue
			}
			var v [8]byte
			if _, err := r.ReadAt(v[:], int64(bo.Uint32(e[8:12]))); err == nil {
				num, den := bo.Uint32(v[0:4]), bo.Uint32(v[4:8])
				if den != 0 {
					xres = float64(num) / float64(den)
				}
			}
		case 292: // T4Options
			ifd.t4Options = first()
		case 296: // ResolutionUnit
			unit = first()
		case 322: // TileWidth
			ifd.tiled = true
		}
	}
	switch unit {
	case 2:
		ifd.dpi = xres
	case 3:
		ifd.dpi = xres * 2.54
	}
	return ifd, int64(bo.Uint32(buf[12*n:])), nil
}

// ifdAt reads a TIFF file as if its header pointed at another IFD, so that
// a decoder that reads the first page (golang.org/x/image/tiff) reads that
// page, straight from the file and without copying it.
type ifdAt struct {
	r   io.ReaderAt
	hdr [8]byte
}

func newIFDAt(r io.ReaderAt, ifdOffset int64) (*ifdAt, error) {
	a := &ifdAt{r: r}
	if _, err := r.ReadAt(a.hdr[:], 0); err != nil {
		return nil, io.ErrUnexpectedEOF
	}
	var bo binary.ByteOrder = binary.LittleEndian
	if a.hdr[0] == 'M' {
		bo = binary.BigEndian
	}
	bo.PutUint32(a.hdr[4:8], uint32(ifdOffset))
	return a, nil
}

func (a *ifdAt) ReadAt(p []byte, off int64) (int, error) {
	n, err := a.r.ReadAt(p, off)
	for i := max(off, 0); i < 8 && i < off+int64(n); i++ {
		p[i-off] = a.hdr[i]
	}
	return n, err
}

// Read makes ifdAt an io.Reader too (tiff.Decode takes one and then uses
// ReadAt); sequential reads are never made.
func (a *ifdAt) Read(p []byte) (int, error) { return 0, errors.New("ifdAt: sequential read") }

// ccittPolarity makes a bilevel CCITT Group 3 or 4 page that
// golang.org/x/image/tiff decoded show as TIFF 6.0 (Adobe 1992) says it
// must: the CCITT codes are white and black runs, and "if the
// PhotometricInterpretation is BlackIsZero, the TIFF reader must reverse
// the meaning of white and black when displaying and printing the image"
// (section 11, CCITT Bilevel Encodings; the same in section 10 for
// Modified Huffman). x/image/tiff v0.48 shows the runs as they are
// whatever the tag says, so a BlackIsZero page (witten.tif, minisblack.tif
// of leptonlib's prog/) came out light on dark; libtiff and Leptonica
// reverse it. img is reversed in place and returned. Compression 2 is not
// read by x/image/tiff (Leptonica reads it, following the tag) and is left
// alone, as are all other pages.
func ccittPolarity(img image.Image, ifd *tiffIFD) image.Image {
	if ifd == nil || ifd.photometric != 1 || (ifd.compression != 3 && ifd.compression != 4) {
		return img
	}
	g, ok := img.(*image.Gray)
	if !ok {
		return img
	}
	for i, v := range g.Pix {
		g.Pix[i] = 255 - v
	}
	return g
}
