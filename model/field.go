package model

import (
	"hash/maphash"
	"slices"

	"bitsift/parse"
)

// hashSeed keys the value hashes of identifier fields for this process.
var hashSeed = maphash.MakeSeed()

// absent is the value id of "this record lacks the field".
const absent = 0

// overflow is the value id given to values of an identifier field once it
// holds MaxDistinct values: such values are no longer told apart, and the
// field's figures become estimates (each overflow value is counted as seen
// once).
const overflow = ^uint32(0)

// field holds the value table of one field over the window.
//
// Invariants: counts[id] is the number of window records whose value id for
// this field is id (id ≥ 1); counts[0] is unused (absent records are
// n − present); present == Σ counts[id≥1] + overflowed; distinct is the number
// of ids with counts[id] > 0; s + Σ clogc(counts[id]) over the ids in big ==
// Σ clogc(counts[id]) over all ids (see up); ids with a zero count are on
// free and not in values.
type field struct {
	name    string
	nameKey wordKey // name's words, when 16 bytes or shorter (isNamed)
	index   int
	values  *hashTable // ids by text (textHash, probeText); nil once hashed
	words   []wordKey  // words[id]: text[id]'s, when 16 bytes or shorter
	text    []string
	counts  []int32
	free    []uint32
	present int64
	// distinct counts ids in use, overflow values not included.
	distinct      int64
	overflowed    int64 // window records whose value is overflow
	s             int64
	valueBytes    int64 // Σ len(value) over window records with an interned value
	overflowBytes int64 // Σ len(value) over window records with an overflow value

	// byHash, when not nil, replaces values: the field is an identifier
	// whose values are told apart by a 64-bit keyed hash and not kept as
	// text (text is nil), ids holding each id's hash and length (so
	// that an id leaving the window leaves the table at once). This keeps a field of unique ids at about 30 bytes per window
	// value instead of 100 or more. Two values collide with probability
	// about n²/2^65 (3e-6 for ten million values).
	byHash *hashTable
	ids    idChunks
	// flat, when not nil, replaces byHash: the identifier's values are a
	// list of hashes, one per record (flatids.go); counts is then nil and
	// distinct and s are exact as of the list's last settle.
	flat *flatIDs
	// samples holds the first few values of a hashed field, for display.
	samples []string

	// tracked: the field is in pair tracking (pairs with it are kept).
	tracked bool
	// synth is set for a field bitsift makes from another (a companion).
	synth *Synthetic
	// timestamp: the stream's time field, never tracked (SetTimestamp).
	timestamp bool
	// big lists the values counted chunkSize times or more, whose terms
	// s leaves out (see up).
	big []uint32
	// ident: the field is classified an identifier (with hysteresis);
	// identRounds counts the reclassifications it has stayed one.
	ident       bool
	identRounds int
}

func newField(name string, index int) *field {
	var nk wordKey
	if len(name) <= 16 {
		nk = keyWords([]byte(name))
	}
	return &field{
		name:    name,
		nameKey: nk,
		index:   index,
		values:  newHashTable(0),
		text:    []string{""},
		words:   []wordKey{{}},
		counts:  []int32{0},
	}
}

// addAt is add for the record that will be the q-th pushed into the
// store: a flat field lists it so, its id made later (addAt returns
// absent).
func (f *field) addAt(v []byte, maxDistinct int, q int) uint32 {
	if f.flat != nil {
		return f.addFlat(v, q)
	}
	return f.add(v, maxDistinct)
}

// add returns the id of value v, adding it if new, and counts one more
// record with it.
func (f *field) add(v []byte, maxDistinct int) uint32 {
	if f.byHash != nil {
		return f.addHashed(v, maxDistinct)
	}
	h, k := textHash(v)
	id := probeText(f.values, h, k, v, f.text, f.words)
	if id == 0 {
		if f.ident && maxDistinct > 0 && int(f.distinct) >= maxDistinct {
			f.overflowed++
			f.present++
			f.overflowBytes += int64(len(v))
			return overflow
		}
		if n := len(f.free); n > 0 {
			id = f.free[n-1]
			f.free = f.free[:n-1]
			f.text[id] = string(v)
			f.words[id] = k
		} else {
			id = uint32(len(f.text))
			f.text = append(f.text, string(v))
			f.words = append(f.words, k)
			f.counts = append(f.counts, 0)
		}
		f.values.insert(h, id)
	}
	c := f.counts[id]
	if c == 0 {
		f.distinct++
	}
	f.s += f.up(int64(c), id)
	f.counts[id] = c + 1
	f.present++
	f.valueBytes += int64(len(v)) // text[id]'s length: the value found is v
	return id
}

// remove counts one record fewer with value id, releasing the id when no
// record in the window uses it any more.
func (f *field) remove(id uint32) {
	if id == overflow {
		// Overflow values are not kept, so neither is their length: take
		// off the mean.
		l := f.overflowBytes / f.overflowed
		f.overflowBytes -= l
		f.overflowed--
		f.present--
		return
	}
	c := f.counts[id]
	f.s += f.down(int64(c), id)
	f.counts[id] = c - 1
	f.present--
	if f.byHash != nil {
		f.valueBytes -= int64(f.ids.length(id))
		if c == 1 {
			f.distinct--
			f.byHash.remove(f.ids.hash(id), id)
			f.free = append(f.free, id)
		}
		return
	}
	f.valueBytes -= int64(len(f.text[id]))
	if c == 1 {
		f.distinct--
		h, _ := textHash([]byte(f.text[id]))
		f.values.remove(h, id)
		f.text[id] = ""
		f.free = append(f.free, id)
	}
}

// addHashed is add for a hashed field.
func (f *field) addHashed(v []byte, maxDistinct int) uint32 {
	id, isNew := f.addHash(hashBytes(v), int32(len(v)), maxDistinct)
	if isNew && len(f.samples) < 3 {
		f.samples = append(f.samples, string(v))
	}
	return id
}

// addHash is addHashed for a value known by its hash h and length l (a
// flat identifier's list is replayed so: unflatten); isNew says the value
// was not in the table.
func (f *field) addHash(h uint64, l int32, maxDistinct int) (id uint32, isNew bool) {
	id = probe(f.byHash, h, &f.ids)
	if id == 0 {
		if maxDistinct > 0 && int(f.distinct) >= maxDistinct {
			f.overflowed++
			f.present++
			f.overflowBytes += int64(l)
			return overflow, false
		}
		if n := len(f.free); n > 0 {
			id = f.free[n-1]
			f.free = f.free[:n-1]
		} else {
			id = uint32(len(f.counts))
			f.counts = append(f.counts, 0)
		}
		f.ids.set(id, h, l)
		f.byHash.insert(h, id)
		isNew = true
	}
	c := f.counts[id]
	if c == 0 {
		f.distinct++
	}
	f.s += f.up(int64(c), id)
	f.counts[id] = c + 1
	f.present++
	f.valueBytes += int64(f.ids.length(id))
	return id, isNew
}

// up is the change of s when value id, of count c, gains a record. s
// sums c·log c over the values counted under the table's first chunk
// only; a value reaching chunkSize moves to big, whose terms sum adds when
// asked. So a value that keeps gaining records (a constant field's, the
// commonest level's) costs nothing per record past the chunk, where
// looking its terms up would hold 8 bytes of table for every count up to
// the largest (8 MB for a million records of one value) and computing them
// a logarithm a record.
func (f *field) up(c int64, id uint32) int64 {
	switch {
	case c+1 < chunkSize:
		return clogc0[c+1] - clogc0[c]
	case c+1 == chunkSize:
		f.big = append(f.big, id)
		return -clogc0[c]
	}
	return 0
}

// down is the change of s when value id, of count c, loses a record.
func (f *field) down(c int64, id uint32) int64 {
	switch {
	case c < chunkSize:
		return clogc0[c-1] - clogc0[c]
	case c == chunkSize:
		i := slices.Index(f.big, id)
		f.big = slices.Delete(f.big, i, i+1)
		return clogc0[c-1]
	}
	return 0
}

// sum is Σ c·log c over the field's values (see up).
func (f *field) sum() int64 {
	s := f.s
	for _, id := range f.big {
		s += clogc(int64(f.counts[id]))
	}
	return s
}

// isNamed says whether key is f's name: two word compares for a name of 16
// bytes or less (the records of a stream repeat their keys: see fieldOf).
func (f *field) isNamed(key []byte) bool {
	if len(key) != len(f.name) {
		return false
	}
	if len(key) <= 16 {
		a, b := parse.Words(key)
		return wordKey{a, b} == f.nameKey
	}
	return f.name == string(key)
}

// hashBytes is the keyed hash of an identifier's value: a text table's
// (textHash), which mixes a value of up to 16 bytes in two multiplies
// where maphash costs a call (a third of the listing of the demo's two
// identifiers, of 16 and 27 bytes).
func hashBytes(v []byte) uint64 {
	h, _ := textHash(v)
	return h
}

// hashed says whether f keeps no text of its values (see byHash, flat).
func (f *field) hashed() bool { return f.byHash != nil || f.flat != nil }

// hashValues turns the field into a hashed one (see byHash), dropping the
// text of its values.
func (f *field) hashValues() {
	if f.byHash != nil {
		return
	}
	f.byHash = newHashTable(f.values.len())
	// By id, not over the map, so that the samples kept do not depend on
	// the map's random order.
	for id, v := range f.text {
		if id == absent || f.counts[id] == 0 {
			continue
		}
		h := hashBytes([]byte(v))
		f.byHash.insert(h, uint32(id))
		f.ids.set(uint32(id), h, int32(len(v)))
		if len(f.samples) < 3 {
			f.samples = append(f.samples, v)
		}
	}
	f.text = nil // hashed fields keep no text: text[id] is never read
	f.values, f.words = nil, nil
}

// idOf returns the id of value v, if the field keeps its text and has it.
func (f *field) idOf(v string) (uint32, bool) {
	if f.values == nil {
		return 0, false
	}
	b := []byte(v)
	h, k := textHash(b)
	id := probeText(f.values, h, k, b, f.text, f.words)
	return id, id != 0
}

// stats returns n-record figures: entropy (plug-in), cells (non-empty values
// including absent) and whether they are estimates.
func (f *field) entropy(n int64) (h float64, cells int64, estimate bool) {
	a := n - f.present
	s := f.sum() + clogc(a) // overflow values count once each: clogc(1) == 0
	cells = f.distinct + f.overflowed
	if a > 0 {
		cells++
	}
	return entropyFromS(n, s), cells, f.overflowed > 0
}
