package report

import (
	"time"

	"bitsift/model"
)

// TimelineEntry is one finding along log time, as the JSON spells it:
// a rule that broke (kind "broken", with given), a field whose values
// shifted ("shift"), a field no longer logged ("gone") or newly logged
// ("new"), with the first and last record where it was seen. Times are
// RFC 3339 when the stream has a time field (else left out); lines are
// counted per file.
type TimelineEntry struct {
	Kind      string `json:"kind"`
	Field     string `json:"field"`
	Given     string `json:"given,omitempty"`
	FirstTime string `json:"first_time,omitempty"`
	FirstLine int64  `json:"first_line"`
	LastTime  string `json:"last_time,omitempty"`
	LastLine  int64  `json:"last_line"`
	File      string `json:"file"`
	Count     int    `json:"count"`
}

// AddTimeline sets the report's timeline; method names how it was found
// (model.TimelineMethod for a report's change points, "seen on screen"
// for the live screen's record).
func (r *Report) AddTimeline(entries []model.TimelineEntry, method string) {
	r.Timeline = []TimelineEntry{}
	r.TimelineMethod = method
	for _, e := range entries {
		r.Timeline = append(r.Timeline, TimelineEntry{
			Kind: e.Kind, Field: e.Field, Given: e.Given,
			FirstTime: r.logTime(e.First.Time), FirstLine: e.First.Line,
			LastTime: r.logTime(e.Last.Time), LastLine: e.Last.Line,
			File: e.First.File, Count: e.Count,
		})
	}
}

// logTime is t as RFC 3339 when the stream has a time field ("" else:
// arrival times are not log time).
func (r *Report) logTime(t int64) string {
	if r.Input.TimeField == "" || t == 0 {
		return ""
	}
	return time.Unix(0, t).UTC().Format(time.RFC3339Nano)
}
