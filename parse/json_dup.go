package parse

import "bytes"

// Duplicate keys in a JSON object: RFC 8259 leaves their meaning open, and
// jq, Go's encoding/json and Python's json all keep the last value. bitsift
// does the same, so that its figures, and a plan's rebuild check, see what
// the tools downstream of a drop plan see: a later member with the same key
// at the same level replaces the earlier one whole (an object's flattened
// fields with it). Keys are compared unescaped. The record says it had
// duplicates (Record.DupKeys), and reports count such records.

// dupKeys tracks the members of the objects being parsed.
type dupKeys struct {
	members []dupMember // of every open object, innermost last
	segs    []byte      // the members' keys, unescaped
	drop    []dupRange  // fields of replaced members
	levels  []uint64    // per open object: a bit per key hash, to skip most compares
}

type dupMember struct {
	level      int
	seg0, seg1 int32 // key in segs
	field      int32 // its first field in the record
}

// dupRange is fields [from, to) of a record.
type dupRange struct{ from, to int32 }

func (d *dupKeys) reset() {
	d.members, d.segs, d.drop, d.levels = d.members[:0], d.segs[:0], d.drop[:0], d.levels[:0]
}

// open starts an object and returns its level.
func (d *dupKeys) open() int {
	d.levels = append(d.levels, 0)
	return len(d.levels) - 1
}

// close ends the object at level: its members are forgotten.
func (d *dupKeys) close(level int) {
	i := len(d.members)
	for i > 0 && d.members[i-1].level >= level {
		i--
	}
	if i < len(d.members) {
		d.segs = d.segs[:d.members[i].seg0]
	}
	d.members = d.members[:i]
	d.levels = d.levels[:level]
}

// member notes a member with key seg at level whose fields start at field
// of the record; an earlier member with the same key at this level is
// replaced: its fields (up to this one's) are dropped.
func (d *dupKeys) member(level int, seg []byte, field int) {
	bit := uint64(1) << ((uint(len(seg))*7 + uint(lastByte(seg))) & 63)
	if d.levels[level]&bit != 0 {
		for i := len(d.members) - 1; i >= 0 && d.members[i].level >= level; i-- {
			m := &d.members[i]
			if m.level != level || !bytes.Equal(d.segs[m.seg0:m.seg1], seg) {
				continue
			}
			// Its fields run to the next member's first field at this
			// level (or to this one's).
			end := int32(field)
			for j := i + 1; j < len(d.members); j++ {
				if d.members[j].level == level {
					end = d.members[j].field
					break
				}
			}
			d.drop = append(d.drop, dupRange{m.field, end})
			m.seg1 = m.seg0 // it no longer matches
			break
		}
	}
	d.levels[level] |= bit
	s0 := int32(len(d.segs))
	d.segs = append(d.segs, seg...)
	d.members = append(d.members, dupMember{level: level, seg0: s0, seg1: int32(len(d.segs)), field: int32(field)})
}

func lastByte(b []byte) byte {
	if len(b) == 0 {
		return 0
	}
	return b[len(b)-1]
}

// apply drops the replaced fields from rec and marks it.
func (d *dupKeys) apply(rec *Record) {
	if len(d.drop) == 0 {
		return
	}
	rec.DupKeys = true
	out := rec.spans[:0]
	for i, s := range rec.spans {
		dropped := false
		for _, r := range d.drop {
			if int32(i) >= r.from && int32(i) < r.to {
				dropped = true
				break
			}
		}
		if !dropped {
			out = append(out, s)
		}
	}
	rec.spans = out
}
