// Package model keeps exact, incrementally updated information measures of
// a window of log records: per field the Shannon entropy H(F), per pair of
// fields the joint entropy H(F,G), and from them, by the chain rule
// H(F|G) = H(F,G) − H(G), conditional entropy and mutual information
// I(F;G) = H(F) + H(G) − H(F,G). Units are bits (log base 2) throughout.
//
// # The estimator
//
// All figures are plug-in (maximum-likelihood) estimates over the records in
// the window: for a table of counts c_i summing to N,
//
//	H = −Σ (c_i/N) log2(c_i/N) = log2 N − S/N,   S = Σ c_i log2 c_i.
//
// Each table keeps S, so a record entering or leaving the window changes H
// in O(1): only the terms of the cells it touches change. S is kept in fixed
// point (2^-30 bits per unit), so adding and removing the same records
// returns exactly the same integer, with no floating-point drift however long
// the stream: the incremental figures equal a recount bit for bit. A batch
// (AddBatch) changes a pair table's counts only, and its S is summed again
// from them at the next snapshot: the same integers, so the same S. A
// field's S leaves out the values counted 65,536 times or more, which are
// summed when asked (field.up), and a flat identifier's S is summed from its
// sorted hashes (flatids.go): the same integers again. The
// rounding of each term is below 5e-10 bits, so H is within 5e-10·K/N of the
// exact value for a table of K cells. Exactness holds while N·log2(N) stays
// below 2^33 (windows of up to about 250 million records).
//
// The Miller–Madow value H + (K−1)/(2N ln 2) is given beside the plug-in
// value: it removes the first-order bias that makes plug-in entropy too low
// when there are few records per value.
//
// A record that lacks a field has, for that field, the value "absent", a
// value of its own.
//
// # Files
//
// The window and its tables:
//   - model.go: Model, Add (intern, store, count pairs), eviction, which
//     fields are tracked in pairs (the identifier rule), Rebuild.
//   - batch.go, cellbatch.go: AddBatch, the same as Add on each record,
//     done in passes (fields and pairs spread over the cores, Σ c·log c
//     computed when a snapshot asks).
//   - constpairs.go: pairs with a constant field, made when read.
//   - field.go, valuetable.go, values.go: a field's value table (text found
//     by a hash table of its own, or 64-bit hashes for an identifier), its
//     counts, display text.
//   - flatids.go: a headless run's identifiers as a list of hashes, one per
//     record (a ring in a window of records), sorted when a snapshot asks
//     (exact, with the identifier rule still decided on exact counts).
//   - cellmap.go: a pair's joint table (a dense matrix, or a hash map).
//   - store.go: the window's records as id columns in blocks; row and
//     column accessors (scans read columns, never whole rows).
//   - entropy.go: fixed-point Σ c·log2 c, the figures from it.
//   - window.go, rewindow.go: window kinds; a model over another window.
//   - timestamp.go, synthetic.go: fields marked as the time, or made by
//     bitsift (companions).
//
// Figures and analyses (on demand, never per record):
//   - snapshot.go, detail.go, subset.go: Snapshot and its accessors.
//   - emi.go, reliable.go: expected mutual information, RFI, derived
//     fields and best predictors.
//   - deep.go, determinants.go (+ determinants_groups.go, its partitions
//     and counts), surprise.go: the Deep analyses over the newest records
//     (run side by side, reading columns).
//   - baseline.go, profile.go, shift.go, broken.go, analysis.go: baselines,
//     the window's Profile, shifts and broken rules against it.
//   - timeline.go (+ timeline_scan.go, its pass over the window's
//     columns), changepoint.go: findings along log time, with no baseline.
package model
