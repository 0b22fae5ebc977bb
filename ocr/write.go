package ocr

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"image"
	"image/png"
	"io"
	"os"
	"path/filepath"

	"recto/internal/atomicfile"
)

// Output file suffixes that WriteOutputs appends to a page's name.
const (
	SuffixText     = ".txt"
	SuffixALTO     = ".alto.xml"
	SuffixRecord   = ".json"
	SuffixPrepared = ".prepared.png"
)

// WriteOutputs writes the outputs of one page under dir: <rel>.txt (the
// text, lines in reading order), <rel>.alto.xml (ALTO v4), <rel>.json (the
// Record) and, when prepared is not nil, <rel>.prepared.png. rel is the
// page's name relative to dir, with "/" or the OS separator, without a
// suffix, e.g. "box1/p0001". Missing directories are created. Each file is
// written to a temporary file in its directory and renamed into place, so
// a reader never sees half a file and an interrupted run leaves the
// previous version intact.
func WriteOutputs(dir, rel string, rec *Record, prepared *image.Gray) error {
	return WriteOutputsWith(dir, rel, rec, prepared, ALTOOptions{})
}

// WriteOutputsWith is WriteOutputs with the ALTO document's quality
// estimate and correction step (WriteALTOWith).
func WriteOutputsWith(dir, rel string, rec *Record, prepared *image.Gray, ao ALTOOptions) error {
	if rel == "" || filepath.IsAbs(rel) {
		return fmt.Errorf("ocr: output name %q must be a relative path", rel)
	}
	base := filepath.Join(dir, filepath.FromSlash(rel))
	if err := os.MkdirAll(filepath.Dir(base), 0o755); err != nil {
		return fmt.Errorf("ocr: %w", err)
	}
	if err := writeAtomic(base+SuffixText, func(w io.Writer) error {
		_, err := io.WriteString(w, rec.Text())
		return err
	}); err != nil {
		return err
	}
	if err := writeAtomic(base+SuffixALTO, func(w io.Writer) error { return WriteALTOWith(w, rec, ao) }); err != nil {
		return err
	}
	if err := writeAtomic(base+SuffixRecord, func(w io.Writer) error { return writeRecordJSON(w, rec) }); err != nil {
		return err
	}
	if prepared != nil {
		// Fast compression: the default level costs up to a second on an A4 page.
		enc := png.Encoder{CompressionLevel: png.BestSpeed}
		if err := writeAtomic(base+SuffixPrepared, func(w io.Writer) error { return enc.Encode(w, prepared) }); err != nil {
			return err
		}
	}
	return nil
}

// writeRecordJSON writes rec indented, ending in a newline.
func writeRecordJSON(w io.Writer, rec *Record) error {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	if err := enc.Encode(rec); err != nil {
		return err
	}
	_, err := w.Write(buf.Bytes())
	return err
}

// writeAtomic writes path through the one atomic writer (internal/atomicfile:
// temporary file in the same folder, fsync, rename); on error path is left
// as it was.
func writeAtomic(path string, write func(io.Writer) error) error {
	err := atomicfile.WriteFunc(path, func(w io.Writer) error {
		bw := bufio.NewWriterSize(w, 64<<10)
		if err := write(bw); err != nil {
			return err
		}
		return bw.Flush()
	})
	if err != nil {
		return fmt.Errorf("ocr: %w", err)
	}
	return nil
}
