package synth

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/crc32"
	"image"
	"image/png"
	"io"
	"math"

	"recto/internal/atomicfile"
)

// WritePNG encodes img as an 8-bit greyscale PNG and records its
// resolution, dpi dots per inch, in a pHYs chunk (pixels per metre, as the
// PNG specification requires) placed right after the header chunk. The
// standard library's encoder writes no pHYs chunk, so WritePNG inserts it.
// A dpi of 0 or less writes no pHYs chunk.
func WritePNG(w io.Writer, img image.Image, dpi float64) error {
	var buf bytes.Buffer
	enc := png.Encoder{CompressionLevel: png.BestSpeed}
	if err := enc.Encode(&buf, img); err != nil {
		return fmt.Errorf("synth: %w", err)
	}
	data := buf.Bytes()
	// Signature (8 bytes), then IHDR: length 4, type 4, data 13, CRC 4.
	const ihdrEnd = 8 + 4 + 4 + 13 + 4
	if len(data) < ihdrEnd || string(data[12:16]) != "IHDR" {
		return errors.New("synth: unexpected PNG layout from image/png")
	}
	if _, err := w.Write(data[:ihdrEnd]); err != nil {
		return err
	}
	if dpi > 0 {
		if _, err := w.Write(physChunk(dpi)); err != nil {
			return err
		}
	}
	_, err := w.Write(data[ihdrEnd:])
	return err
}

// physChunk builds a pHYs chunk: pixels per unit X and Y (4 bytes each,
// big-endian), unit specifier 1 (the metre), CRC-32 over type and data.
func physChunk(dpi float64) []byte {
	ppm := uint32(math.Round(dpi / 0.0254))
	c := make([]byte, 4+4+9+4)
	binary.BigEndian.PutUint32(c[0:], 9)
	copy(c[4:], "pHYs")
	binary.BigEndian.PutUint32(c[8:], ppm)
	binary.BigEndian.PutUint32(c[12:], ppm)
	c[16] = 1
	binary.BigEndian.PutUint32(c[17:], crc32.ChecksumIEEE(c[4:17]))
	return c
}

// SavePNG writes the page image to path as a PNG with its DPI recorded.
// It returns an error naming the file when it cannot be written.
func (p *Page) SavePNG(path string) error {
	err := atomicfile.WriteFunc(path, func(w io.Writer) error {
		bw := bufio.NewWriter(w)
		if err := WritePNG(bw, p.Image, p.DPI); err != nil {
			return err
		}
		return bw.Flush()
	})
	if err != nil {
		return fmt.Errorf("synth: writing %q: %w", path, err)
	}
	return nil
}
