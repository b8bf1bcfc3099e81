package model

import "sort"

// The timeline's pass over the window (Timeline): the rules' and the
// distributions' series filled from their columns, a span of rows at a
// time, and each field's runs of rows without it.

// timelineSpan is how many rows the scan decodes at a time: the columns
// the rules and distributions read, for that many rows, are decoded once
// (each at most 4 bytes a row: 256 KB) and shared by the tasks.
const timelineSpan = 1 << 16

func (sc *timelineScan) scan(sources []string) {
	m := sc.m
	sc.tracer = m.Tracer(sources)
	// The rules and distributions read columns, a span of rows at a time:
	// each column a span once, then each rule and distribution (a task of
	// its own, spread over the cores) over its columns. Every task keeps
	// its own series and takes its rows in order, so the figures are those
	// of a scan row by row.
	need := map[int]bool{}
	for _, rs := range sc.rules {
		need[rs.g], need[rs.t] = true, true
	}
	for _, d := range sc.dists {
		need[d.idx] = true
	}
	cols := make(map[int][]uint32, len(need))
	tasks := len(sc.rules) + len(sc.dists)
	for lo := 0; lo < sc.n; lo += timelineSpan {
		hi := min(lo+timelineSpan, sc.n)
		for j := range need {
			cols[j] = m.st.column(j, lo, hi, cols[j])
		}
		spread((hi-lo)*tasks, tasks, func(i int) {
			if i < len(sc.rules) {
				sc.scanRule(sc.rules[i], lo, cols[sc.rules[i].g], cols[sc.rules[i].t])
			} else {
				sc.scanDist(sc.dists[i-len(sc.rules)], lo, cols[sc.dists[i-len(sc.rules)].idx])
			}
		})
	}
	// Where each field is missing, from its column.
	sc.scanGaps()
	sc.fileRank = map[string]int{}
	for i, f := range sources {
		if _, ok := sc.fileRank[f]; !ok {
			sc.fileRank[f] = i
		}
	}
}

// scanRule takes rows lo, lo+1, … (given's and target's ids) into rs.
func (sc *timelineScan) scanRule(rs *ruleSeries, lo int, given, target []uint32) {
	target = target[:len(given)]
	for x, gid := range given {
		if int(gid) >= len(rs.expect) || rs.expect[gid] == noExpect {
			continue
		}
		r := lo + x
		k := r / sc.size
		rs.has[k]++
		if target[x] != rs.expect[gid] {
			rs.broke[k]++
			if rs.first[k] < 0 {
				rs.first[k] = r
			}
			rs.last[k] = r
		}
	}
}

// scanDist takes rows lo, lo+1, … (the field's ids) into d.
func (sc *timelineScan) scanDist(d *distSeries, lo int, ids []uint32) {
	for x, id := range ids {
		if int(id) < len(d.bucket) {
			d.counts[(lo+x)/sc.size][d.bucket[id]]++
		}
	}
}

// scanGaps notes where each field is present, column by column, the
// fields spread over the cores. A flat identifier's ids are not in the
// store: whether a record has it is in its list (a zero hash is absent).
func (sc *timelineScan) scanGaps() {
	fields := sc.m.fields
	spread(sc.n*len(fields), len(fields), func(i int) {
		f, g := fields[i], &sc.gaps[i]
		if fl := f.flat; fl != nil {
			gone := sc.m.st.gone // record gone+r of the list is row r
			fl.runs(gone, gone+sc.n, func(hs []uint64, q0 int) {
				for x, h := range hs {
					if h != 0 {
						g.has(q0 - gone + x)
					}
				}
			})
		} else {
			var col []uint32
			for lo := 0; lo < sc.n; lo += timelineSpan {
				hi := min(lo+timelineSpan, sc.n)
				col = sc.m.st.column(i, lo, hi, col)
				for x, id := range col {
					if id != absent {
						g.has(lo + x)
					}
				}
			}
		}
		if g.last >= 0 && g.last < sc.n-1 {
			g.keep(segment{g.last + 1, sc.n})
		}
	})
}

// has notes that row r has the field: a row right after the last one is
// counted here (inlined: it is most rows), note sees the first and those
// after a gap.
func (g *fieldGaps) has(r int) {
	if r != g.last+1 {
		g.note(r)
		return
	}
	g.last = r
	g.present++
}

// noRow is fieldGaps.last before any row: −2, so that no row comes right
// after it.
const noRow = -2

func (g *fieldGaps) note(r int) {
	if g.last < 0 {
		g.firstAt = r
		if r > 0 {
			g.keep(segment{0, r})
		}
	} else if r > g.last+1 {
		g.keep(segment{g.last + 1, r})
	}
	g.last = r
	g.present++
}

// keep notes a run, keeping the longest maxRuns.
func (g *fieldGaps) keep(s segment) {
	if s.end-s.start < timelineMinChunk {
		return
	}
	g.runs = append(g.runs, s)
	if len(g.runs) > maxRuns {
		sort.Slice(g.runs, func(i, j int) bool { return g.runs[i].end-g.runs[i].start > g.runs[j].end-g.runs[j].start })
		g.runs = g.runs[:maxRuns]
	}
}
