// Package profile reads, writes and adds count profiles (bitsift.profile/1):
// the count tables of a set of log records (model.CountTables: per field
// its values and counts, per pair its cells, per identifier a bottom-k
// summary), with the accounting of the input they came from, the format,
// the companions' settings, what the profile covers and its time buckets.
// Every figure bitsift reports is a function of those counts, so profiles
// of shards of a stream add up to the figures of one run over all of it
// (Merge), and a report, a plan or the screen can start from a profile
// instead of a log (model.SnapshotFromCounts).
//
// The file is JSON compressed with zstd; Schema is its version. Fields may
// be added within a version; none is renamed or removed.
package profile

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"

	"github.com/klauspost/compress/zstd"

	"bitsift/model"
)

// Schema is the version tag of a profile file.
const Schema = "bitsift.profile/1"

// Profile is one profile file.
type Profile struct {
	Schema     string      `json:"schema"`
	Format     string      `json:"format"`
	Confidence float64     `json:"format_confidence"`
	TimeField  string      `json:"time_field,omitempty"`
	TimeFormat string      `json:"time_format,omitempty"`
	Companions []Companion `json:"companions"`
	// Redaction is set when values were replaced by keyed hashes; profiles
	// add up only when they share it (the same fields, the same key).
	Redaction *Redaction `json:"redaction,omitempty"`
	// Coverage lists what the profile counts: byte ranges of files, a
	// query and its time range, offset ranges of a topic's partitions.
	Coverage []Coverage `json:"coverage"`
	Lines    int64      `json:"lines"`
	Rejected int64      `json:"rejected"`
	Parts    int64      `json:"parts,omitempty"`
	// RejectedExamples are the first rejected lines (without their text
	// under redaction).
	RejectedExamples []model.Rejection `json:"rejected_examples"`
	Faults           []string          `json:"faults,omitempty"`
	Buckets          *Buckets          `json:"time_buckets,omitempty"`
	// Measured says what produced the counts ("log", "postgres",
	// "clickhouse", "merge").
	Measured string             `json:"measured"`
	Counts   *model.CountTables `json:"counts"`
}

// Companion is one field bitsift adds, with how it is made.
type Companion struct {
	Name   string `json:"name"`
	Source string `json:"source"`
	Method string `json:"method"`
}

// Redaction describes redacted values: the fields (empty: every field) and
// a fingerprint of the key (see KeyID), never the key.
type Redaction struct {
	Fields []string `json:"fields,omitempty"`
	KeyID  string   `json:"key_id"`
}

// Coverage is one part of what a profile counts. Kind says which fields
// apply: "file" (Source, From, To: a byte range of the file as stored),
// "query" (Source: engine and table, Query, Since, Until), "topic"
// (Source: topic, Partition, From, To: an offset range). Other kinds may
// be added; Merge only compares the ranges of the same Kind and Source.
type Coverage struct {
	Kind      string `json:"kind"`
	Source    string `json:"source"`
	From      int64  `json:"from"`
	To        int64  `json:"to"`
	Partition *int32 `json:"partition,omitempty"`
	Query     string `json:"query,omitempty"`
	Since     string `json:"since,omitempty"`
	Until     string `json:"until,omitempty"`
}

// Write writes p to w, compressed.
func Write(w io.Writer, p *Profile) error {
	p.Schema = Schema
	enc, err := zstd.NewWriter(w)
	if err != nil {
		return err
	}
	if err := json.NewEncoder(enc).Encode(p); err != nil {
		enc.Close()
		return err
	}
	return enc.Close()
}

// WriteFile writes p to path whole or not at all, and durably
// (WriteDurable).
func WriteFile(path string, p *Profile) error {
	return WriteDurable(path, func(w io.Writer) error { return Write(w, p) })
}

// WriteDurable writes a file whole or not at all, and durably before it
// returns: a temporary file in the same folder, flushed to disk, renamed
// into place, then the folder flushed so that the rename itself survives a
// crash. A Kafka worker commits offsets only after this returns.
func WriteDurable(path string, write func(io.Writer) error) error {
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, ".bitsift-profile-*")
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(tmp, 256<<10)
	err = write(bw)
	if err == nil {
		err = bw.Flush()
	}
	if err == nil {
		err = tmp.Sync()
	}
	if cerr := tmp.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(tmp.Name(), path)
	}
	if err != nil {
		os.Remove(tmp.Name())
		return err
	}
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer d.Close()
	return d.Sync()
}

// ErrNotProfile says a file is not a profile.
var ErrNotProfile = errors.New("not a bitsift profile")

var zstdMagic = []byte{0x28, 0xb5, 0x2f, 0xfd}

// prefix is how every profile's JSON starts (Write puts schema first).
var prefix = []byte(`{"schema":"bitsift.profile/`)

// IsProfile says whether the file at path is a profile: zstd data whose
// text starts as a profile's does. It reads a few kilobytes at most.
func IsProfile(path string) bool {
	// Only regular files: opening a FIFO waits for a writer and reading it
	// would take the log's first bytes; a device may never end.
	if fi, err := os.Stat(path); err != nil || !fi.Mode().IsRegular() {
		return false
	}
	f, err := os.Open(path)
	if err != nil {
		return false
	}
	defer f.Close()
	head := make([]byte, 4)
	if _, err := io.ReadFull(f, head); err != nil || !bytes.Equal(head, zstdMagic) {
		return false
	}
	f.Seek(0, io.SeekStart)
	dec, err := zstd.NewReader(f, zstd.WithDecoderConcurrency(1))
	if err != nil {
		return false
	}
	defer dec.Close()
	got := make([]byte, len(prefix))
	if _, err := io.ReadFull(dec, got); err != nil {
		return false
	}
	return bytes.Equal(got, prefix)
}

// Read reads a profile.
func Read(r io.Reader) (*Profile, error) {
	dec, err := zstd.NewReader(r, zstd.WithDecoderConcurrency(1))
	if err != nil {
		return nil, err
	}
	defer dec.Close()
	var p Profile
	if err := json.NewDecoder(dec).Decode(&p); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrNotProfile, err)
	}
	if p.Schema != Schema {
		return nil, fmt.Errorf("%w: schema %q (this bitsift reads %s)", ErrNotProfile, p.Schema, Schema)
	}
	if p.Counts == nil {
		return nil, fmt.Errorf("%w: no counts", ErrNotProfile)
	}
	return &p, p.check()
}

// ReadFile reads the profile at path.
func ReadFile(path string) (*Profile, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	p, err := Read(bufio.NewReader(f))
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return p, nil
}

// check rejects tables whose parts do not agree (a damaged or hand-edited
// file), so that nothing later indexes out of range.
func (p *Profile) check() error {
	ct := p.Counts
	names := map[string]int{}
	for i, f := range ct.Fields {
		if len(f.Values) != len(f.Counts) {
			return fmt.Errorf("%w: field %q: %d values, %d counts", ErrNotProfile, f.Name, len(f.Values), len(f.Counts))
		}
		if s := f.Summary; s != nil && len(s.Hashes) != len(s.Counts) {
			return fmt.Errorf("%w: field %q: summary hashes and counts differ", ErrNotProfile, f.Name)
		}
		names[f.Name] = i
	}
	for _, pr := range ct.Pairs {
		a, okA := names[pr.A]
		b, okB := names[pr.B]
		if !okA || !okB || len(pr.I) != len(pr.N) || len(pr.J) != len(pr.N) {
			return fmt.Errorf("%w: pair %q, %q does not match its fields", ErrNotProfile, pr.A, pr.B)
		}
		na, nb := uint32(len(ct.Fields[a].Values)), uint32(len(ct.Fields[b].Values))
		for x := range pr.N {
			if pr.I[x] > na || pr.J[x] > nb {
				return fmt.Errorf("%w: pair %q, %q names a value its field lacks", ErrNotProfile, pr.A, pr.B)
			}
		}
	}
	return nil
}

// Snapshot is the snapshot of the profile's records, with its input
// accounting.
func (p *Profile) Snapshot(opt model.SnapshotOptions) *model.Snapshot {
	s := model.SnapshotFromCounts(p.Counts, opt)
	s.Input = model.Input{Format: p.Format, Confidence: p.Confidence, Lines: p.Lines, Rejected: p.Rejected,
		Parts: p.Parts, RejectedExamples: p.RejectedExamples, Faults: p.Faults,
		TimeField: p.TimeField, TimeFormat: p.TimeFormat}
	for _, c := range p.Coverage {
		s.Input.Sources = append(s.Input.Sources, c.String())
	}
	return s
}

// String describes one coverage entry in a line.
func (c Coverage) String() string {
	switch c.Kind {
	case "file":
		return fmt.Sprintf("%s (bytes %d–%d)", c.Source, c.From, c.To)
	case "query":
		s := c.Source
		if c.Query != "" {
			s += " where " + c.Query
		}
		if c.Since != "" || c.Until != "" {
			s += fmt.Sprintf(" [%s, %s)", c.Since, c.Until)
		}
		return s
	case "topic":
		p := int32(-1)
		if c.Partition != nil {
			p = *c.Partition
		}
		return fmt.Sprintf("%s/%d offsets %d–%d", c.Source, p, c.From, c.To)
	}
	return c.Kind + " " + c.Source
}

// CompanionsOf lists the companion fields of count tables, by name.
func CompanionsOf(ct *model.CountTables) []Companion {
	out := []Companion{}
	for _, f := range ct.Fields {
		if f.Synthetic != nil {
			out = append(out, Companion{Name: f.Name, Source: f.Synthetic.Source, Method: f.Synthetic.Method})
		}
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Name < out[j].Name })
	return out
}

// New makes a profile of count tables read from a log, with the input's
// accounting from a snapshot of the same records (s.Input).
func New(ct *model.CountTables, in model.Input) *Profile {
	p := &Profile{Schema: Schema, Format: in.Format, Confidence: in.Confidence, TimeField: in.TimeField, TimeFormat: in.TimeFormat,
		Companions: CompanionsOf(ct), Coverage: []Coverage{}, Lines: in.Lines, Rejected: in.Rejected,
		Parts: in.Parts, RejectedExamples: in.RejectedExamples, Faults: in.Faults, Measured: "log", Counts: ct}
	if p.RejectedExamples == nil {
		p.RejectedExamples = []model.Rejection{}
	}
	p.Buckets = NewBuckets(ct.Times)
	return p
}
