package kafka

import (
	"fmt"

	"bitsift/model"
	"bitsift/profile"
)

// MissingPrefix starts the fault a gap in a partition's offsets becomes in
// a merged profile (and so in every report of it).
const MissingPrefix = "missing data: "

// SegmentProfile is the profile of one worker segment: its count tables
// and accounting, covering its partition's offsets [From, To).
func SegmentProfile(seg *Segment, red *profile.Redaction, sketch int) *profile.Profile {
	snap := seg.In.Snapshot(model.SnapshotOptions{TopValues: -1})
	ct := seg.In.Model().Counts(model.CountOptions{SketchK: sketch, Times: true})
	p := profile.New(ct, snap.Input)
	p.Redaction = red
	part := seg.Partition
	p.Coverage = []profile.Coverage{{Kind: "topic", Source: seg.Topic, Partition: &part, From: seg.From, To: seg.To}}
	return p
}

// ChainProfiles links the profiles of a topic's partitions by offset (see
// Chains) before they are added: a profile whose range the chain counts
// already is left out, and each range no profile covers is returned in
// missing ("missing data: ..."), for the merged profile's faults, so that a
// report says so instead of adding what is there as if it were all.
// Profiles of files and queries pass as they are. notes says what was left
// out and why.
func ChainProfiles(ps []*profile.Profile) (keep []*profile.Profile, missing, notes []string) {
	var spans []Span
	for i, p := range ps {
		if len(p.Coverage) == 1 && p.Coverage[0].Kind == "topic" && p.Coverage[0].Partition != nil {
			c := p.Coverage[0]
			spans = append(spans, Span{Topic: c.Source, Partition: *c.Partition, From: c.From, To: c.To, Index: i})
			continue
		}
		keep = append(keep, p)
	}
	if len(spans) == 0 {
		return ps, nil, nil
	}
	ch := Chains(spans)
	for _, s := range ch.Use {
		keep = append(keep, ps[s.Index])
	}
	for _, s := range ch.Repeats {
		notes = append(notes, fmt.Sprintf("left out %s: counted already (a worker wrote it and stopped before committing)", s))
	}
	for _, s := range ch.Overlaps {
		notes = append(notes, fmt.Sprintf("left out %s: it overlaps records counted already and cannot be split", s))
	}
	for _, g := range ch.Gaps {
		missing = append(missing, MissingPrefix+g.String())
	}
	return keep, missing, notes
}

// Merge chains the profiles (ChainProfiles) and adds those kept: what
// bitsift merge does. The gaps are faults of the merged profile.
func Merge(ps []*profile.Profile) (m *profile.Profile, notes []string, err error) {
	ps, missing, notes := ChainProfiles(ps)
	m = ps[0]
	if len(ps) > 1 {
		if m, err = profile.Merge(ps); err != nil {
			return nil, notes, err
		}
	}
	m.Faults = append(m.Faults, missing...)
	return m, notes, nil
}
