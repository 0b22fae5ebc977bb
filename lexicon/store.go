package lexicon

import (
	"slices"
	"sort"
)

// store maps keys (Key, or pair keys) to counts: a frozen table read from
// a compact file (compact.go), when there is one, under a map that takes
// whatever is added. A key in both has the sum of its two counts. The
// zero value is not usable; a store needs its map (newStore).
type store struct {
	m map[string]int64
	t *table // nil unless loaded from a compact file
}

func newStore(hint int) store { return store{m: make(map[string]int64, hint)} }

// get returns the count of k and whether the store holds k.
func (s *store) get(k string) (int64, bool) {
	n, ok := s.m[k]
	if s.t != nil {
		if i := s.t.find(k); i >= 0 {
			return n + s.t.vals[i], true
		}
	}
	return n, ok
}

func (s *store) has(k string) bool {
	if _, ok := s.m[k]; ok {
		return true
	}
	return s.t != nil && s.t.find(k) >= 0
}

func (s *store) add(k string, n int64) { s.m[k] += n }

// len returns the number of distinct keys.
func (s *store) len() int {
	if s.t == nil {
		return len(s.m)
	}
	n := s.t.len()
	for k := range s.m {
		if s.t.find(k) < 0 {
			n++
		}
	}
	return n
}

// each calls fn once for every key with its count, in no particular order.
func (s *store) each(fn func(k string, n int64)) {
	if s.t == nil {
		for k, n := range s.m {
			fn(k, n)
		}
		return
	}
	for i := range s.t.len() {
		k := s.t.key(i)
		fn(k, s.t.vals[i]+s.m[k])
	}
	for k, n := range s.m {
		if s.t.find(k) < 0 {
			fn(k, n)
		}
	}
}

// sortedKeys returns the keys, sorted.
func (s *store) sortedKeys() []string {
	ks := make([]string, 0, s.len())
	s.each(func(k string, _ int64) { ks = append(ks, k) })
	sort.Strings(ks)
	return ks
}

// table is a read-only string-keyed table laid out as a compact file holds
// it (compact.go): the keys, sorted, one after the other in one string,
// their values, and an open-addressing hash index (linear probing) over
// them. Nothing in it is a pointer but the arena, so the garbage collector
// has nothing to scan, and loading it is reading a file.
type table struct {
	arena string   // the keys, sorted, concatenated
	offs  []uint32 // len n+1: key i is arena[offs[i]:offs[i+1]]
	vals  []int64  // len n
	slots []uint64 // len a power of two above n: 0 empty, else key index + 1 in the low 32 bits, the key's keyHash's high 32 bits above
}

func (t *table) len() int { return len(t.vals) }

func (t *table) key(i int) string { return t.arena[t.offs[i]:t.offs[i+1]] }

// find returns the index of k, -1 when absent.
func (t *table) find(k string) int {
	mask := uint64(len(t.slots) - 1)
	h := keyHash(k)
	tag := h >> 32
	for j := h & mask; ; j = (j + 1) & mask {
		s := t.slots[j]
		if s == 0 {
			return -1
		}
		// The stored hash bits spare reading the key of almost every
		// other key met on the way.
		if s>>32 == tag {
			if i := int(uint32(s) - 1); t.key(i) == k {
				return i
			}
		}
	}
}

// keyHash hashes a key eight bytes at a time (each word multiplied into
// the state, then the 64-bit finaliser of MurmurHash3, Appleby 2011, so
// that the low bits used for the index depend on every byte): fixed, so
// that the hash index written into a compact file is valid in every
// process.
func keyHash(s string) uint64 {
	h := uint64(len(s)) * 0x9e3779b97f4a7c15
	for len(s) >= 8 {
		v := uint64(s[0]) | uint64(s[1])<<8 | uint64(s[2])<<16 | uint64(s[3])<<24 |
			uint64(s[4])<<32 | uint64(s[5])<<40 | uint64(s[6])<<48 | uint64(s[7])<<56
		h = (h ^ v) * 0xff51afd7ed558ccd
		h ^= h >> 32
		s = s[8:]
	}
	var v uint64
	for i := 0; i < len(s); i++ {
		v |= uint64(s[i]) << (8 * i)
	}
	h ^= v
	h ^= h >> 33
	h *= 0xff51afd7ed558ccd
	h ^= h >> 33
	h *= 0xc4ceb9fe1a85ec53
	h ^= h >> 33
	return h
}

// slotCount is the size of the hash index for n keys: the smallest power
// of two at least twice n (load factor at most one half), at least 2.
func slotCount(n int) int {
	s := 2
	for s < 2*n {
		s <<= 1
	}
	return s
}

// newTable builds a table of the given keys and values (keys distinct).
func newTable(keys []string, vals []int64) *table {
	idx := make([]int, len(keys))
	for i := range idx {
		idx[i] = i
	}
	slices.SortFunc(idx, func(a, b int) int {
		switch {
		case keys[a] < keys[b]:
			return -1
		case keys[a] > keys[b]:
			return 1
		}
		return 0
	})
	size := 0
	for _, k := range keys {
		size += len(k)
	}
	arena := make([]byte, 0, size)
	t := &table{offs: make([]uint32, 1, len(keys)+1), vals: make([]int64, len(keys)), slots: make([]uint64, slotCount(len(keys)))}
	for j, i := range idx {
		arena = append(arena, keys[i]...)
		t.offs = append(t.offs, uint32(len(arena)))
		t.vals[j] = vals[i]
	}
	t.arena = string(arena)
	mask := uint64(len(t.slots) - 1)
	for i := range t.vals {
		h := keyHash(t.key(i))
		j := h & mask
		for t.slots[j] != 0 {
			j = (j + 1) & mask
		}
		t.slots[j] = uint64(i+1) | h>>32<<32
	}
	return t
}

// frozen returns the keys and counts of the store as one table.
func (s *store) frozen() *table {
	keys := make([]string, 0, s.len())
	vals := make([]int64, 0, cap(keys))
	s.each(func(k string, n int64) { keys, vals = append(keys, k), append(vals, n) })
	return newTable(keys, vals)
}
