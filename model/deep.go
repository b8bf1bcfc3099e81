package model

// DeepMaxRecords bounds what the Deep analyses of a snapshot (multi-field
// determinants and surprising records) scan: the newest DeepMaxRecords
// records of the window, all of them in a smaller window. Their time and
// memory (a column of value ids and several partitions of 4 bytes a record)
// then stay bounded however large an all-records window grows, while the
// per-field and pair figures still cover the whole window.
// Snapshot.DeepRecords says how many records they covered.
const DeepMaxRecords = 200_000

// deepMax is DeepMaxRecords, lowered by tests.
var deepMax = DeepMaxRecords

// deepRows is how many of the newest window records the Deep analyses
// scan.
func (m *Model) deepRows() int {
	return min(m.st.n, deepMax)
}
