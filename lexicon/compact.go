package lexicon

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/crc32"
	"io"
	"io/fs"
	"math"
	"math/bits"
	"os"
	"strings"
	"unsafe"

	"recto/internal/atomicfile"
)

// The compact form of a lexicon file. Parsing a lexicon file means
// inflating it and filling hash maps with every word, which for the two
// Norwegian lexicons (1.6 million words) takes about a second; the compact
// form holds the same lexicon as tables laid out for use (store.go), so
// that loading it is reading one file. ForLang loads the lexicons of the
// lexicon folder through it; Load always reads the lexicon file itself.
//
// The compact form of DIR/CODE.lex.gz is DIR/CODE.lex.bin (CompactPath).
// `recto lexicon build` writes it beside the lexicon file it builds in the
// lexicon folder (WriteCompact); ForLang writes it on the first load of a
// lexicon file that has none. It records the size and CRC-32C of the
// lexicon file it was made from, and a CRC-32C of its own contents: a
// compact form that is of another version, truncated, damaged, or made
// from another lexicon file than the one beside it now is never used;
// ForLang reads the lexicon file instead, writes a new compact form and
// says so once through Note, naming both files.
//
// Layout (version 1), every integer little-endian, every section starting
// at a multiple of 8 bytes:
//
//	header   64 bytes: "recto-lexcompact", u32 version, u32 0, u64 payload length,
//	         u64 size of the lexicon file, u32 its CRC-32C, u32 0,
//	         u64 keyHash("recto-lexcompact") (the hash index is only valid
//	         for the hash function that built it), 8 zero bytes
//	payload  i64 total count; u64 number of compounding rule sets;
//	         table words; table word pairs; for each rule set: u64 COMPOUNDMIN,
//	         u64 COMPOUNDWORDMAX, u64 checks (1 dup, 2 triple, 4 simplified triple),
//	         table parts (values: roles)
//	table    u64 n, u64 slots, u64 key bytes; u32 offsets[n+1]; i64 values[n];
//	         u64 hash index[slots] (0 free, else key index + 1 | high 32 bits of the key's hash << 32);
//	         the keys, sorted and concatenated
//	trailer  u32 CRC-32C (Castagnoli) of the payload, 4 zero bytes
const (
	compactMagic   = "recto-lexcompact"
	compactVersion = 1
	compactHeader  = 64
	compactTrailer = 8
)

// Note receives the one-line notes the package has for the user: a
// compact form found unusable and rebuilt, or one that could not be
// written. The default prints the line on standard error; a command or a
// test may replace it before the first ForLang.
var Note = func(msg string) { fmt.Fprintln(os.Stderr, msg) }

// useCompact is false to make ForLang parse the lexicon files themselves
// (the benchmarks compare the two).
var useCompact = true

var castagnoli = crc32.MakeTable(crc32.Castagnoli)

// Reasons a compact form is refused (wrapped in the error readCompact
// returns).
var (
	errCompactVersion   = errors.New("of another version")
	errCompactTruncated = errors.New("truncated")
	errCompactDamaged   = errors.New("damaged")
	errCompactStale     = errors.New("made from another version of the lexicon file")
)

// CompactPath returns the compact form's file for a lexicon file:
// "nob.lex.gz" gives "nob.lex.bin".
func CompactPath(path string) string {
	return strings.TrimSuffix(path, ".gz") + ".bin"
}

// WriteCompact writes the compact form of the lexicon file at path to
// CompactPath(path), through internal/atomicfile. It reads the lexicon
// file itself, so the compact form holds exactly what Load reads.
func WriteCompact(path string) error {
	src, err := os.ReadFile(path)
	if err != nil {
		return fmt.Errorf("lexicon: %w", err)
	}
	l, err := read(bytes.NewReader(src), path)
	if err != nil {
		return err
	}
	return writeCompact(CompactPath(path), l, src)
}

// loadFast loads the lexicon file at path through its compact form (see
// the top of this file).
func loadFast(path string) (*Lexicon, error) {
	if !useCompact {
		return Load(path)
	}
	src, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("lexicon: %w", err)
	}
	cp := CompactPath(path)
	l, cerr := readCompact(cp, src)
	if cerr == nil {
		return l, nil
	}
	l, err = read(bytes.NewReader(src), path)
	if err != nil {
		return nil, err
	}
	werr := writeCompact(cp, l, src)
	switch {
	case werr != nil:
		Note(fmt.Sprintf("lexicon: cannot write the compact form of %q (%v); the lexicon file is read each time", path, werr))
	case !errors.Is(cerr, fs.ErrNotExist):
		Note(fmt.Sprintf("lexicon: %v; rebuilt it from %q", cerr, path))
	}
	return l, nil
}

// writeCompact writes the compact form of l (not merged; as read from
// src, the lexicon file's bytes) to path.
func writeCompact(path string, l *Lexicon, src []byte) error {
	l = l.flat()
	words, pairs := l.words.frozen(), l.bigrams.frozen()
	parts := make([]*table, len(l.comp))
	for i, c := range l.comp {
		keys := c.parts.sortedKeys()
		vals := make([]int64, len(keys))
		for j, k := range keys {
			vals[j] = int64(c.role(k))
		}
		parts[i] = newTable(keys, vals)
	}
	size := 16 + words.size() + pairs.size()
	for _, t := range parts {
		size += 24 + t.size()
	}
	err := atomicfile.WriteFunc(path, func(w io.Writer) error {
		bw := bufio.NewWriterSize(w, 1<<16)
		var h [compactHeader]byte
		copy(h[:], compactMagic)
		binary.LittleEndian.PutUint32(h[16:], compactVersion)
		binary.LittleEndian.PutUint64(h[24:], uint64(size))
		binary.LittleEndian.PutUint64(h[32:], uint64(len(src)))
		binary.LittleEndian.PutUint32(h[40:], crc32.Checksum(src, castagnoli))
		binary.LittleEndian.PutUint64(h[48:], keyHash(compactMagic))
		bw.Write(h[:])
		cw := &crcWriter{w: bw}
		e := &encoder{w: cw}
		e.u64(uint64(l.total))
		e.u64(uint64(len(l.comp)))
		e.table(words)
		e.table(pairs)
		for i, c := range l.comp {
			var checks uint64
			for j, on := range []bool{c.dup, c.triple, c.simplified} {
				if on {
					checks |= 1 << j
				}
			}
			e.u64(uint64(c.min))
			e.u64(uint64(c.max))
			e.u64(checks)
			e.table(parts[i])
		}
		if cw.n != int64(size) {
			return fmt.Errorf("compact form: wrote %d payload bytes, planned %d", cw.n, size) // a bug here, never the data's fault
		}
		var t [compactTrailer]byte
		binary.LittleEndian.PutUint32(t[:], cw.crc)
		bw.Write(t[:])
		return bw.Flush()
	})
	if err != nil {
		return fmt.Errorf("lexicon: %w", err)
	}
	return nil
}

// size returns the bytes the table takes in a compact file.
func (t *table) size() int {
	return 24 + pad8(4*len(t.offs)) + 8*len(t.vals) + 8*len(t.slots) + pad8(len(t.arena))
}

func pad8(n int) int { return (n + 7) &^ 7 }

type crcWriter struct {
	w   io.Writer
	crc uint32
	n   int64
}

func (c *crcWriter) Write(p []byte) (int, error) {
	c.crc = crc32.Update(c.crc, castagnoli, p)
	c.n += int64(len(p))
	return c.w.Write(p)
}

// encoder writes the payload; the writer underneath is buffered and its
// error comes back from Flush.
type encoder struct {
	w   io.Writer
	buf []byte
}

func (e *encoder) u64(v uint64) { e.w.Write(binary.LittleEndian.AppendUint64(e.buf[:0], v)) }

func (e *encoder) table(t *table) {
	e.u64(uint64(len(t.vals)))
	e.u64(uint64(len(t.slots)))
	e.u64(uint64(len(t.arena)))
	e.u32s(t.offs)
	b := e.buf[:0]
	for _, v := range t.vals {
		b = binary.LittleEndian.AppendUint64(b, uint64(v))
		if len(b) >= 1<<15 {
			e.w.Write(b)
			b = b[:0]
		}
	}
	for _, v := range t.slots {
		b = binary.LittleEndian.AppendUint64(b, v)
		if len(b) >= 1<<15 {
			e.w.Write(b)
			b = b[:0]
		}
	}
	e.w.Write(b)
	io.WriteString(e.w, t.arena)
	e.w.Write(make([]byte, pad8(len(t.arena))-len(t.arena)))
	e.buf = b
}

func (e *encoder) u32s(vs []uint32) {
	b := e.buf[:0]
	for _, v := range vs {
		b = binary.LittleEndian.AppendUint32(b, v)
		if len(b) >= 1<<15 {
			e.w.Write(b)
			b = b[:0]
		}
	}
	if len(vs)%2 == 1 {
		b = append(b, 0, 0, 0, 0)
	}
	e.w.Write(b)
	e.buf = b
}

// readCompact reads the compact form at path made from src (the lexicon
// file's bytes). A missing file gives an error wrapping fs.ErrNotExist;
// any other refusal names the file and says what is wrong with it.
func readCompact(path string, src []byte) (*Lexicon, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return nil, err
	}
	if st.Size() > math.MaxInt32*8 {
		return nil, fmt.Errorf("compact form %q: %w (%d bytes)", path, errCompactDamaged, st.Size())
	}
	// Read into 8-byte words, so the tables can be used where they lie.
	n := int(st.Size())
	words := make([]uint64, (n+7)/8)
	var data []byte
	if n > 0 {
		data = unsafe.Slice((*byte)(unsafe.Pointer(&words[0])), n)
	}
	if _, err := io.ReadFull(f, data); err != nil {
		return nil, fmt.Errorf("compact form %q: %w", path, err)
	}
	l, err := decodeCompact(data, src)
	if err != nil {
		return nil, fmt.Errorf("compact form %q is %w", path, err)
	}
	return l, nil
}

// decodeCompact decodes a compact form (see the layout above) made from
// src. The tables of the result are data itself, not copies, when data is
// 8-byte aligned and the machine little-endian.
func decodeCompact(data, src []byte) (*Lexicon, error) {
	if len(data) < compactHeader || string(data[:len(compactMagic)]) != compactMagic {
		if len(data) < compactHeader && strings.HasPrefix(compactMagic, string(data[:min(len(data), len(compactMagic))])) {
			return nil, fmt.Errorf("%w: %d bytes", errCompactTruncated, len(data))
		}
		return nil, fmt.Errorf("%w: no compact-form header", errCompactDamaged)
	}
	if v := binary.LittleEndian.Uint32(data[16:]); v != compactVersion {
		return nil, fmt.Errorf("%w (version %d; this build reads %d)", errCompactVersion, v, compactVersion)
	}
	if binary.LittleEndian.Uint64(data[48:]) != keyHash(compactMagic) {
		return nil, fmt.Errorf("%w (its hash index was built with another hash function)", errCompactVersion)
	}
	size := binary.LittleEndian.Uint64(data[24:])
	if have := uint64(len(data) - compactHeader - compactTrailer); len(data) < compactHeader+compactTrailer || have < size {
		return nil, fmt.Errorf("%w: %d bytes, the header promises %d", errCompactTruncated, len(data), size+compactHeader+compactTrailer)
	} else if have > size {
		return nil, fmt.Errorf("%w: %d bytes more than the header says", errCompactDamaged, have-size)
	}
	payload := data[compactHeader : compactHeader+int(size)]
	if sum := binary.LittleEndian.Uint32(data[compactHeader+int(size):]); crc32.Checksum(payload, castagnoli) != sum {
		return nil, fmt.Errorf("%w: checksum mismatch", errCompactDamaged)
	}
	if binary.LittleEndian.Uint64(data[32:]) != uint64(len(src)) || binary.LittleEndian.Uint32(data[40:]) != crc32.Checksum(src, castagnoli) {
		return nil, errCompactStale
	}
	if uintptr(unsafe.Pointer(unsafe.SliceData(payload)))%8 != 0 {
		payload = alignedCopy(payload)
	}
	d := &decoder{b: payload}
	l := &Lexicon{words: newStore(0), bigrams: newStore(0)}
	l.total = int64(d.u64())
	ncomp := d.u64()
	l.words.t = d.table()
	l.bigrams.t = d.table()
	for i := uint64(0); i < ncomp && d.err == nil; i++ {
		mn, mx, checks := d.u64(), d.u64(), d.u64()
		if mn < 1 || mn > 1<<16 || mx > 1<<16 || checks > 7 {
			d.fail("bad compounding rules")
		}
		c := &compounding{min: int(mn), max: int(mx), dup: checks&1 != 0, triple: checks&2 != 0, simplified: checks&4 != 0, parts: newStore(0)}
		c.parts.t = d.table()
		l.comp = append(l.comp, c)
	}
	if d.err == nil && len(d.b) != 0 {
		d.fail("bytes after the last table")
	}
	if d.err != nil {
		return nil, fmt.Errorf("%w: %v", errCompactDamaged, d.err)
	}
	return l, nil
}

func alignedCopy(b []byte) []byte {
	w := make([]uint64, (len(b)+7)/8)
	if len(b) == 0 {
		return nil
	}
	c := unsafe.Slice((*byte)(unsafe.Pointer(&w[0])), len(b))
	copy(c, b)
	return c
}

// littleEndian is whether the tables of a compact file can be used as
// they lie.
var littleEndian = binary.NativeEndian.Uint16([]byte{1, 0}) == 1

// decoder reads an 8-byte aligned payload; the first problem is kept in
// err and every read after it returns zero values.
type decoder struct {
	b   []byte
	err error
}

func (d *decoder) fail(what string) {
	if d.err == nil {
		d.err = errors.New(what)
	}
	d.b = nil
}

func (d *decoder) take(n uint64) []byte {
	if d.err != nil || n > uint64(len(d.b)) {
		d.fail("a table runs past the end")
		return nil
	}
	b := d.b[:n]
	d.b = d.b[min(pad8(int(n)), len(d.b)):]
	return b
}

func (d *decoder) u64() uint64 {
	b := d.take(8)
	if b == nil {
		return 0
	}
	return binary.LittleEndian.Uint64(b)
}

// readTable reads n little-endian values of T (4 or 8 bytes each), in
// place where the machine is little-endian.
func readTable[T uint32 | uint64 | int64](d *decoder, n uint64) []T {
	size := uint64(unsafe.Sizeof(T(0)))
	if n > uint64(len(d.b))/size {
		d.fail("a table runs past the end")
		return nil
	}
	b := d.take(size * n)
	if n == 0 || b == nil {
		return []T{}
	}
	if littleEndian {
		return unsafe.Slice((*T)(unsafe.Pointer(&b[0])), n)
	}
	out := make([]T, n)
	for i := range out {
		if size == 4 {
			out[i] = T(binary.LittleEndian.Uint32(b[4*i:]))
		} else {
			out[i] = T(binary.LittleEndian.Uint64(b[8*i:]))
		}
	}
	return out
}

// table reads one table and checks that using it cannot go out of bounds
// or loop for ever: offsets rising within the keys, index entries naming
// keys, a free entry to end every probe.
func (d *decoder) table() *table {
	n, slots, keyBytes := d.u64(), d.u64(), d.u64()
	if d.err != nil {
		return nil
	}
	if n >= math.MaxUint32 || slots <= n || bits.OnesCount64(slots) != 1 || keyBytes > math.MaxUint32 {
		d.fail("bad table sizes")
		return nil
	}
	t := &table{offs: readTable[uint32](d, n+1), vals: readTable[int64](d, n), slots: readTable[uint64](d, slots)}
	arena := d.take(keyBytes)
	if d.err != nil {
		return nil
	}
	if t.offs[0] != 0 || uint64(t.offs[n]) != keyBytes {
		d.fail("bad key offsets")
		return nil
	}
	for i := 1; i < len(t.offs); i++ {
		if t.offs[i] < t.offs[i-1] {
			d.fail("bad key offsets")
			return nil
		}
	}
	free := false
	for _, s := range t.slots {
		if uint64(uint32(s)) > n || (s != 0 && uint32(s) == 0) {
			d.fail("bad hash index")
			return nil
		}
		free = free || s == 0
	}
	if !free {
		d.fail("bad hash index")
		return nil
	}
	t.arena = unsafe.String(unsafe.SliceData(arena), len(arena)) // never written again
	return t
}
