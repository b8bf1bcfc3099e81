package model

import (
	"crypto/md5"
	"encoding/binary"
	"sort"
)

// Count tables: the model's figures as plain data, to be written to a file,
// added to other tables (shards of one stream, a database's GROUP BY
// answers) and turned back into a Snapshot (SnapshotFromCounts). Every
// figure of a plain snapshot is a function of them: per field the count of
// each value (absent included), per tracked pair the count of each cell.
//
// Coupling to the model's internals (kept to this file and
// counts_snapshot.go, so that a rewrite of them touches only these): Counts
// reads field.{name,text,counts,present,overflowed,valueBytes,
// overflowBytes,ident,tracked,timestamp,synth,byHash}, Model.pairs with
// cellMap.each (cell key id(a)<<32|id(b)), store.n and store.metaAt(i).time;
// SnapshotFromCounts fills Snapshot's unexported joint/emi tables and calls
// expectedMI, histOf, classify, clogc, entropyFromS, sortValues and binsOf.

// CountTables are the count tables of a set of records.
type CountTables struct {
	Records int64         `json:"records"`
	Oldest  int64         `json:"oldest_ns,omitempty"` // Unix ns of the first record, 0 unknown
	Newest  int64         `json:"newest_ns,omitempty"`
	Fields  []FieldCounts `json:"fields"`
	Pairs   []PairCounts  `json:"pairs"`
	Times   []int64       `json:"-"` // record times (Unix ns) when asked for; not serialised
}

// FieldCounts is one field's value table. Values[i] has Counts[i] records;
// the records lacking the field are Absent. For a summarised field (an
// identifier, Summary set) Values and Counts hold only its most frequent
// values, and the figures come from the Summary.
type FieldCounts struct {
	Name      string     `json:"name"`
	Values    []string   `json:"values"`
	Counts    []int64    `json:"counts"`
	Absent    int64      `json:"absent"`
	Bytes     int64      `json:"value_bytes"` // Σ len(value) over the records with it
	Ident     bool       `json:"identifier,omitempty"`
	Timestamp bool       `json:"timestamp,omitempty"`
	Tracked   bool       `json:"tracked,omitempty"`
	Synthetic *Synthetic `json:"synthetic,omitempty"`
	Summary   *Summary   `json:"summary,omitempty"`
}

// Summary stands for an identifier's value table, whose size is that of the
// records: a bottom-k sketch (Cohen and Kaplan, "Summarizing data using
// bottom-k sketches", PODC 2007; the distinct-value estimator is KMV, Beyer
// et al., "On synopses for distinct-value estimation under multiset
// operations", SIGMOD 2007): the K values with the smallest hashes, with
// their counts, plus the exact figures of this table. Two summaries add by
// merging their hash lists and keeping the K smallest: a value in the K
// smallest of the union is in the K smallest of every table that holds it,
// so its count is exact. While a sketch holds every value of the field
// (Complete) the sum is exact; past that, the distinct count and Σ c·log2 c
// are estimated from the sample (Estimate).
type Summary struct {
	K        int      `json:"k"`
	Hashes   []uint64 `json:"hashes"` // ascending
	Counts   []int64  `json:"counts"`
	Complete bool     `json:"complete"`
	Distinct int64    `json:"distinct"`  // values, absent not included
	CLogC    float64  `json:"clogc_sum"` // Σ c·log2 c over the values (bits·records)
	Estimate bool     `json:"estimate,omitempty"`
	Present  int64    `json:"present"`
}

// PairCounts is the joint table of two fields: cell (A[i], B[i]) has N[i]
// records, A and B being indices into the fields' Values plus one (0 is
// absent).
type PairCounts struct {
	A string   `json:"a"`
	B string   `json:"b"`
	I []uint32 `json:"ia"`
	J []uint32 `json:"ib"`
	N []int64  `json:"n"`
}

// SketchHash is the hash a Summary keeps of a value: the first 8 bytes of
// its MD5 digest, big-endian. MD5 is used because both PostgreSQL (md5) and
// ClickHouse (MD5) compute it on the server, so a sketch made there merges
// with one made here; it needs uniformity, not secrecy.
func SketchHash(v string) uint64 {
	d := md5.Sum([]byte(v))
	return binary.BigEndian.Uint64(d[:8])
}

// SummaryTop is how many most frequent values a summarised field keeps.
const SummaryTop = ProfileTopValues

// CountOptions tune Counts.
type CountOptions struct {
	// SketchK is the bottom-k size of identifier summaries (default 65536).
	SketchK int
	// Times keeps every window record's time in CountTables.Times.
	Times bool
}

// Counts exports the window's count tables. Values of an identifier whose
// text the model no longer keeps (see Options.KeepText) cannot be
// sketched: its Summary has no hashes and is not Complete.
func (m *Model) Counts(opt CountOptions) *CountTables {
	if opt.SketchK <= 0 {
		opt.SketchK = 1 << 16
	}
	m.settleAll()
	m.realizePairs()
	n := int64(m.st.n)
	ct := &CountTables{Records: n}
	if n > 0 {
		ct.Oldest, ct.Newest = m.st.metaAt(0).time, m.st.metaAt(m.st.n-1).time
	}
	if opt.Times {
		ct.Times = make([]int64, m.st.n)
		for i := range ct.Times {
			ct.Times[i] = m.st.metaAt(i).time
		}
	}
	index := make([][]uint32, len(m.fields)) // model id → export index + 1
	for fi, f := range m.fields {
		fc := FieldCounts{Name: f.name, Absent: n - f.present, Bytes: f.valueBytes + f.overflowBytes,
			Ident: f.ident, Timestamp: f.timestamp, Tracked: f.tracked}
		if f.synth != nil {
			s := *f.synth
			fc.Synthetic = &s
		}
		if f.ident || f.hashed() || f.overflowed > 0 {
			fc.Values, fc.Counts = []string{}, []int64{}
			fc.Summary = m.summarise(f, opt.SketchK)
			for _, v := range m.top(f, SummaryTop) {
				if !v.Absent && !v.Sample {
					fc.Values = append(fc.Values, v.Value)
					fc.Counts = append(fc.Counts, int64(v.Count))
				}
			}
		} else {
			idx := make([]uint32, len(f.counts))
			for id := 1; id < len(f.counts); id++ {
				if c := f.counts[id]; c > 0 {
					fc.Values = append(fc.Values, f.text[id])
					fc.Counts = append(fc.Counts, int64(c))
					idx[id] = uint32(len(fc.Values))
				}
			}
			index[fi] = idx
		}
		ct.Fields = append(ct.Fields, fc)
	}
	for _, p := range m.pairs {
		ia, ib := index[p.a], index[p.b]
		if ia == nil || ib == nil {
			continue // a field without a full table has no cells to name
		}
		pc := PairCounts{A: m.fields[p.a].name, B: m.fields[p.b].name}
		p.m.each(func(k uint64, c int32) {
			a, b := uint32(k>>32), uint32(k)
			if int(a) >= len(ia) || int(b) >= len(ib) {
				return
			}
			pc.I = append(pc.I, ia[a])
			pc.J = append(pc.J, ib[b])
			pc.N = append(pc.N, int64(c))
		})
		ct.Pairs = append(ct.Pairs, pc)
	}
	return ct
}

// summarise makes the Summary of f (see Summary).
func (m *Model) summarise(f *field, k int) *Summary {
	s := &Summary{K: k, Present: f.present, Distinct: f.distinct + f.overflowed,
		Estimate: f.overflowed > 0}
	if f.flat != nil {
		s.CLogC = float64(f.s) / fixScale // settled by Counts
		return s
	}
	var cl int64
	type hc struct {
		h uint64
		c int64
	}
	var all []hc
	for id := 1; id < len(f.counts); id++ {
		c := f.counts[id]
		if c <= 0 {
			continue
		}
		cl += clogc(int64(c))
		if f.text != nil {
			all = append(all, hc{SketchHash(f.text[id]), int64(c)})
		}
	}
	s.CLogC = float64(cl) / fixScale
	if f.text == nil {
		return s // hashed by the model: no text to sketch
	}
	sort.Slice(all, func(i, j int) bool { return all[i].h < all[j].h })
	s.Complete = f.overflowed == 0 && len(all) <= k
	if len(all) > k {
		all = all[:k]
	}
	for _, x := range all {
		s.Hashes = append(s.Hashes, x.h)
		s.Counts = append(s.Counts, x.c)
	}
	return s
}

// IsIdentifier is the identifier rule of the model (see identEnter) for a
// field with distinct values over present records, for callers that
// classify fields from counts (a database's GROUP BY) before asking for
// pair tables: an identifier gets a Summary and no pairs.
//
// Rows with no order (a table) cannot replay the model's hysteresis, which
// keeps a field of a stream an identifier down to identLeave once it has
// entered at identEnter: on a few thousand records a field whose share of
// distinct values ends between the two may be classified either way by a
// log report, depending on the order its values came in.
func IsIdentifier(distinct, present int64) bool {
	return present >= identMinPresent && float64(distinct) >= identEnter*float64(present)
}
