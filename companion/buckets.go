package companion

import (
	"hash/maphash"
	"math"
	"math/bits"
	"strconv"

	"bitsift/parse"
)

// Numeric buckets: four per decade, with edges 1, 1.8, 3.2 and 5.6 times a
// power of ten (10^(k/4) rounded to two digits: an "E-series"-like choice,
// common practice). A value's bucket is labelled by its half-open interval,
// "[180,320)"; negative values mirror it, "(-320,-180]"; zero is "0"; a
// value that is not a number is "NaN" and a null ("-" or empty) keeps its
// own text. Edges are exact decimals, so 180 falls in [180,320) however it
// is written (180, 180.0, 1.8e2).

// bucketEdges are the bucket edges within a decade, in tenths.
var bucketEdges = [4]int64{10, 18, 32, 56}

// Buckets is the FIELD~log companion. It keeps each label made so that
// labelling allocates only for a bucket not seen before, and the labels of
// the first memoMax values it sees, so that a value seen before costs one
// look-up instead of reading a number and a logarithm (a third of the time
// on the demo's latencies). Values of up to 16 bytes (most numbers in
// logs) are remembered in short, a table of their bytes as two words;
// longer ones in memo.
type Buckets struct {
	source, name string
	labels       map[int]string    // bucket code → label
	memo         map[string]string // value → label, at most memoMax
	short        shortMemo
	out          []byte
}

// memoMax is how many values a Buckets remembers the label of, in each of
// short and memo.
const memoMax = 1 << 12

// shortMemo maps a value of 1 to 16 bytes, told exactly by its length and
// two overlapping words (parse.Words), to its label: an open-addressing
// table with linear probing, twice memoMax slots, never more than memoMax
// of them used. It replaced the map look-up, which took about 30 ns of a
// record's labelling on the demo (a quarter of it). The hash is keyed
// (memoSeed), so that values chosen to share a slot in one run do not in
// another.
type shortMemo struct {
	slots []memoSlot
	used  int
	text  []string       // labels by index
	index map[string]int // label → index in text
}

type memoSlot struct {
	a, b  uint64
	n     uint8  // the value's length; 0: an empty slot
	label uint16 // index in text
}

var memoSeed = maphash.Bytes(maphash.MakeSeed(), nil) | 1

// find returns the slot of the value (a, b, n): its own, or the empty one
// where it goes.
func (m *shortMemo) find(a, b uint64, n uint8) *memoSlot {
	hi, lo := bits.Mul64(a^memoSeed^uint64(n)<<56, b^0x9E3779B97F4A7C15)
	mask := uint64(len(m.slots) - 1)
	for i := (hi ^ lo) & mask; ; i = (i + 1) & mask {
		s := &m.slots[i]
		if s.n == 0 || s.n == n && s.a == a && s.b == b {
			return s
		}
	}
}

// get returns the label of v (1 to 16 bytes), made by label when new.
func (m *shortMemo) get(v []byte, label func([]byte) string) string {
	if m.slots == nil {
		m.slots = make([]memoSlot, 2*memoMax)
	}
	a, b := parse.Words(v)
	s := m.find(a, b, uint8(len(v)))
	if s.n != 0 {
		return m.text[s.label]
	}
	l := label(v)
	if m.used < memoMax {
		i, ok := m.index[l]
		if !ok {
			if m.index == nil {
				m.index = map[string]int{}
			}
			i = len(m.text)
			m.text = append(m.text, l)
			m.index[l] = i
		}
		if i <= math.MaxUint16 {
			*s = memoSlot{a: a, b: b, n: uint8(len(v)), label: uint16(i)}
			m.used++
		}
	}
	return l
}

// NewBuckets returns the ~log companion of field source.
func NewBuckets(source string) *Buckets {
	return &Buckets{source: source, name: source + BucketSuffix}
}

// Source implements Companion.
func (b *Buckets) Source() string { return b.source }

// Name implements Companion.
func (b *Buckets) Name() string { return b.name }

// Method implements Companion.
func (*Buckets) Method() string { return "log10 buckets, 4 per decade" }

// Value implements Companion.
func (b *Buckets) Value(v []byte) []byte {
	if n := len(v); n > 0 && n <= 16 {
		b.out = append(b.out[:0], b.short.get(v, b.label)...)
		return b.out
	}
	l, ok := b.memo[string(v)]
	if !ok {
		l = b.label(v)
		if b.memo == nil {
			b.memo = make(map[string]string)
		}
		if len(b.memo) < memoMax {
			b.memo[string(v)] = l
		}
	}
	b.out = append(b.out[:0], l...)
	return b.out
}

// label returns the bucket label of the number v.
func (b *Buckets) label(v []byte) string {
	if isNull(v) {
		if len(v) == 0 {
			return ""
		}
		return "-"
	}
	x, ok := parseNumber(v)
	if !ok || math.IsNaN(x) {
		return "NaN"
	}
	if x == 0 {
		return "0"
	}
	neg := x < 0
	if neg {
		x = -x
	}
	if math.IsInf(x, 0) {
		if neg {
			return "-Inf"
		}
		return "+Inf"
	}
	e, q := bucketOf(x)
	code := (e*4+q)*2 + boolInt(neg)
	if l, ok := b.labels[code]; ok {
		return l
	}
	lo, hi := edge(e, q), edge(e, q+1)
	var l string
	if neg {
		l = "(-" + fmtEdge(hi) + ",-" + fmtEdge(lo) + "]"
	} else {
		l = "[" + fmtEdge(lo) + "," + fmtEdge(hi) + ")"
	}
	if b.labels == nil {
		b.labels = make(map[int]string)
	}
	b.labels[code] = l
	return l
}

func boolInt(b bool) int {
	if b {
		return 1
	}
	return 0
}

// edge is the q-th edge of decade e: bucketEdges[q] × 10^(e−1), with q = 4
// the next decade's first. Computed as an integer times or over a power of
// ten so that it is the double nearest the exact decimal.
func edge(e, q int) float64 {
	if q == 4 {
		e, q = e+1, 0
	}
	k := float64(bucketEdges[q])
	p := e - 1
	if p >= 0 {
		return k * math.Pow10(p)
	}
	return k / math.Pow10(-p)
}

// bucketOf finds decade e (10^e ≤ x < 10^(e+1)) and the bucket q in it.
func bucketOf(x float64) (e, q int) {
	e = int(math.Floor(math.Log10(x)))
	for x < edge(e, 0) {
		e--
	}
	for x >= edge(e+1, 0) {
		e++
	}
	for q = 3; q > 0 && x < edge(e, q); q-- {
	}
	return e, q
}

func fmtEdge(x float64) string {
	if x >= 1e-4 && x < 1e7 {
		return strconv.FormatFloat(x, 'f', -1, 64)
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// parseNumber reads a decimal number (optional sign, digits, fraction,
// exponent) without allocating; it refuses anything else, hex and "NaN"
// included. The result is the nearest double or within an ulp of it,
// which is exact for bucketing's purposes except at 17-digit edges.
func parseNumber(b []byte) (float64, bool) {
	i, n := 0, len(b)
	if n == 0 || n > 64 {
		return 0, false
	}
	neg := false
	if b[0] == '-' || b[0] == '+' {
		neg = b[0] == '-'
		i++
	}
	var mant uint64
	digits, exp := 0, 0
	sawDigit := false
	for ; i < n && b[i] >= '0' && b[i] <= '9'; i++ {
		sawDigit = true
		if digits < 19 {
			mant = mant*10 + uint64(b[i]-'0')
			if mant > 0 {
				digits++
			}
		} else {
			exp++
		}
	}
	if i < n && b[i] == '.' {
		i++
		for ; i < n && b[i] >= '0' && b[i] <= '9'; i++ {
			sawDigit = true
			if digits < 19 {
				mant = mant*10 + uint64(b[i]-'0')
				if mant > 0 {
					digits++
				}
				exp--
			}
		}
	}
	if !sawDigit {
		return 0, false
	}
	if i < n && (b[i] == 'e' || b[i] == 'E') {
		i++
		eneg := false
		if i < n && (b[i] == '-' || b[i] == '+') {
			eneg = b[i] == '-'
			i++
		}
		if i == n {
			return 0, false
		}
		x := 0
		for ; i < n && b[i] >= '0' && b[i] <= '9'; i++ {
			if x < 10000 {
				x = x*10 + int(b[i]-'0')
			}
		}
		if eneg {
			x = -x
		}
		exp += x
	}
	if i != n {
		return 0, false
	}
	f := float64(mant)
	switch {
	case mant == 0:
		// 0e700: zero whatever the exponent (0 × 10^700 would be NaN).
	case exp > 0:
		f *= math.Pow10(exp)
	case exp < 0 && exp >= -300:
		f /= math.Pow10(-exp)
	case exp < 0:
		f = f / math.Pow10(300) / math.Pow10(-exp-300)
	}
	if neg {
		f = -f
	}
	return f, true
}
