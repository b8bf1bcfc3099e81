package model

import (
	"hash/maphash"
	"math/bits"

	"bitsift/parse"
)

// hashTable maps the 64-bit keyed hashes of a field's values to their ids:
// an identifier's (probe compares the full hashes) or, in a text table,
// any field's that keeps its text (probeText compares the text). It is an
// open-addressing table with linear probing and
// backward-shift deletion, so a value leaving the window takes its entry out
// at once: no stale entries, no sweeps, and an id freed and reused by
// another value can never be found under the old value's hash.
//
// A slot holds tag<<32 | id, where tag is the hash's top 32 bits and id ≥ 1;
// 0 is an empty slot. The full hash of id is hashes[id], so a probe reads
// the slot array only, and the hashes only on a tag match. It is written by
// hand because a Go map of a million entries costs several cache misses per
// lookup and more memory (about 40 bytes per entry against 8–16 here).
//
// Invariant: used == the number of non-empty slots; every live id (count >
// 0) is in exactly one slot, found from its home slot without crossing an
// empty one.
type hashTable struct {
	slots []uint64
	mask  uint64
	shift uint
	used  int
}

func newHashTable(n int) *hashTable {
	t := &hashTable{}
	size := 16
	for size*3 < n*4+4 {
		size *= 2
	}
	t.alloc(size)
	return t
}

func (t *hashTable) alloc(size int) {
	t.slots = make([]uint64, size)
	t.mask = uint64(size - 1)
	t.shift = 64
	for s := size; s > 1; s >>= 1 {
		t.shift--
	}
}

// len is the number of values in the table.
func (t *hashTable) len() int { return t.used }

// home is the first slot to probe for hash h: its top bits, which maphash
// spreads evenly.
func (t *hashTable) home(h uint64) uint64 { return h >> t.shift & t.mask }

// find returns the id of hash h, or 0; hashes[id] is id's hash.
func (t *hashTable) find(h uint64, hashes []uint64) uint32 {
	return probe(t, h, hashSlice(hashes))
}

// hashSource gives the full hash of an id.
type hashSource interface{ hash(id uint32) uint64 }

type hashSlice []uint64

func (s hashSlice) hash(id uint32) uint64 { return s[id] }

// probe is find with the ids' hashes from src.
func probe[S hashSource](t *hashTable, h uint64, src S) uint32 {
	tag := h >> 32
	i := t.home(h)
	for {
		s := t.slots[i]
		if s == 0 {
			return 0
		}
		if s>>32 == tag && src.hash(uint32(s)) == h {
			return uint32(s)
		}
		i = (i + 1) & t.mask
	}
}

// insert adds hash h with id, which must not be in the table.
func (t *hashTable) insert(h uint64, id uint32) {
	if (t.used+1)*4 > len(t.slots)*3 {
		t.grow()
	}
	i := t.home(h)
	for t.slots[i] != 0 {
		i = (i + 1) & t.mask
	}
	t.slots[i] = h>>32<<32 | uint64(id)
	t.used++
}

// remove takes id, whose hash is h, out of the table.
func (t *hashTable) remove(h uint64, id uint32) {
	want := h>>32<<32 | uint64(id)
	i := t.home(h)
	for t.slots[i] != want {
		if t.slots[i] == 0 {
			panic("model: hashTable.remove of a value not in the table")
		}
		i = (i + 1) & t.mask
	}
	t.slots[i] = 0
	t.used--
	// Backward shift: move later entries of the probe run into the hole
	// when their home slot is not cyclically in (i, j].
	j := i
	for {
		j = (j + 1) & t.mask
		s := t.slots[j]
		if s == 0 {
			return
		}
		// The home of an entry is found from its tag: the tag holds the
		// hash's top 32 bits, and home uses only top bits while the table
		// has at most 2^32 slots.
		home := t.home(s >> 32 << 32)
		if (j > i && (home <= i || home > j)) || (j < i && home <= i && home > j) {
			t.slots[i] = s
			t.slots[j] = 0
			i = j
		}
	}
}

func (t *hashTable) grow() {
	old := t.slots
	t.alloc(len(old) * 2)
	for _, s := range old {
		if s != 0 {
			i := t.home(s >> 32 << 32)
			for t.slots[i] != 0 {
				i = (i + 1) & t.mask
			}
			t.slots[i] = s
		}
	}
}

// bytes is the memory the table holds.
func (t *hashTable) bytes() int { return len(t.slots) * 8 }

// idChunks holds a hashed field's hash and value length per id in chunks
// that never move: an id past the last chunk costs one new chunk, never a
// copy of the others (a field of a million unique values would otherwise
// copy, and leave as garbage, its arrays at every doubling).
type idChunks struct {
	h [][]uint64
	l [][]int32
}

const (
	idChunkBits = 14
	idChunkMask = 1<<idChunkBits - 1
)

func (c *idChunks) hash(id uint32) uint64  { return c.h[id>>idChunkBits][id&idChunkMask] }
func (c *idChunks) length(id uint32) int32 { return c.l[id>>idChunkBits][id&idChunkMask] }

// set records id's hash and length, adding chunks up to id.
func (c *idChunks) set(id uint32, h uint64, l int32) {
	for int(id>>idChunkBits) >= len(c.h) {
		c.h = append(c.h, make([]uint64, 1<<idChunkBits))
		c.l = append(c.l, make([]int32, 1<<idChunkBits))
	}
	c.h[id>>idChunkBits][id&idChunkMask] = h
	c.l[id>>idChunkBits][id&idChunkMask] = l
}

// bytes is the memory the chunks hold.
func (c *idChunks) bytes() int { return len(c.h) << idChunkBits * 12 }

// Text tables. A field that keeps its values' text finds their ids with a
// hashTable too, keyed by textHash, the text itself compared on a tag
// match (probeText). It replaced a Go map[string]uint32, which cost about
// 40% of the model's interning: the map's small-map path compares a key
// with each of up to eight entries, and its hash is the general one, where
// textHash mixes a short value's bytes in two loads and a multiply.

// textSeed keys textHash for this process, so that values chosen to
// collide in one run do not collide in another.
var textSeed = maphash.Bytes(maphash.MakeSeed(), nil) | 1

// wordKey is a value of up to 16 bytes as the two words textHash loads:
// with its length, it tells the value exactly (the loads cover every byte),
// so a short value is compared in two word compares, not a call.
type wordKey struct{ a, b uint64 }

// textHash hashes a value for a text table: values of up to 16 bytes by
// two overlapping loads (returned as its wordKey) mixed with a 128-bit
// multiply (after wyhash's construction), longer ones with maphash.
func textHash(v []byte) (uint64, wordKey) {
	n := len(v)
	if n > 16 {
		return maphash.Bytes(hashSeed, v), wordKey{}
	}
	a, b := parse.Words(v) // keyWords, written out: it is not inlined
	k := wordKey{a, b}
	hi, lo := bits.Mul64(k.a^textSeed^uint64(n)<<56, k.b^0x9E3779B97F4A7C15)
	hi, lo = bits.Mul64(hi^lo, textSeed^0xD6E8FEB86659FD93)
	return hi ^ lo, k
}

// keyWords is the wordKey of a value of up to 16 bytes (parse.Words). The
// hot callers write it out (the compiler does not inline it).
func keyWords(v []byte) wordKey {
	a, b := parse.Words(v)
	return wordKey{a, b}
}

// probeText returns the id whose text is v (h, k = textHash(v)), or 0;
// words[id] is id's wordKey.
func probeText(t *hashTable, h uint64, k wordKey, v []byte, text []string, words []wordKey) uint32 {
	tag := h >> 32
	i := t.home(h)
	short := len(v) <= 16
	for {
		s := t.slots[i]
		if s == 0 {
			return 0
		}
		if s>>32 == tag {
			id := uint32(s)
			if short {
				if len(text[id]) == len(v) && words[id] == k {
					return id
				}
			} else if text[id] == string(v) {
				return id
			}
		}
		i = (i + 1) & t.mask
	}
}
