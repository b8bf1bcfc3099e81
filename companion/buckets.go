package companion

import (
	"math"
	"strconv"
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
// map look-up instead of reading a number and a logarithm (a third of the
// time on the demo's latencies).
type Buckets struct {
	source, name string
	labels       map[int]string    // bucket code → label
	memo         map[string]string // value → label, at most memoMax
	out          []byte
}

// memoMax is how many values a Buckets remembers the label of.
const memoMax = 1 << 12

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
