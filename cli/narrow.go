package cli

import (
	"time"

	"github.com/spf13/cobra"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/report"
)

// narrowFlags are --where, --since and --until.
type narrowFlags struct {
	where        []string
	since, until string
}

func (n *narrowFlags) register(cmd *cobra.Command) {
	fs := cmd.Flags()
	fs.StringArrayVar(&n.where, "where", nil, "keep only records where FIELD=VALUE, FIELD!=VALUE, FIELD~REGEXP or FIELD!~REGEXP (repeat: all must hold)")
	fs.StringVar(&n.since, "since", "", "keep only records at or after this log time (RFC 3339, or 2006-01-02 15:04:05, or a date; UTC unless a zone is given)")
	fs.StringVar(&n.until, "until", "", "keep only records before this log time (same forms as --since)")
}

// filter builds the ingest filter (nil when nothing narrows).
func (n *narrowFlags) filter() (*ingest.Filter, error) {
	f := &ingest.Filter{Text: n.where}
	for _, w := range n.where {
		c, err := model.ParseCond(w)
		if err != nil {
			return nil, usage("%v", err)
		}
		f.Where = append(f.Where, c)
	}
	var err error
	if f.Since, err = parseLogTime("--since", n.since); err != nil {
		return nil, err
	}
	if f.Until, err = parseLogTime("--until", n.until); err != nil {
		return nil, err
	}
	if !f.Since.IsZero() && !f.Until.IsZero() && !f.Until.After(f.Since) {
		return nil, usage("--until %s is not after --since %s", n.until, n.since)
	}
	if !f.Active() {
		return nil, nil
	}
	return f, nil
}

var logTimeLayouts = []string{time.RFC3339Nano, "2006-01-02T15:04:05", "2006-01-02 15:04:05.999999999", "2006-01-02 15:04", "2006-01-02"}

func parseLogTime(flag, s string) (time.Time, error) {
	if s == "" {
		return time.Time{}, nil
	}
	for _, l := range logTimeLayouts {
		if t, err := time.ParseInLocation(l, s, time.UTC); err == nil {
			return t, nil
		}
	}
	return time.Time{}, usage("%s %q: want a time such as 2026-03-14T06:00:35Z, 2026-03-14 06:00:35 or 2026-03-14", flag, s)
}

// narrowOf says how the ingester's stream was narrowed, for the report.
func narrowOf(in *ingest.Ingester) *report.Narrow {
	f := in.Filter()
	if !f.Active() {
		return nil
	}
	n := &report.Narrow{Where: f.Text}
	if !f.Since.IsZero() {
		n.Since = f.Since.Format(time.RFC3339Nano)
	}
	if !f.Until.IsZero() {
		n.Until = f.Until.Format(time.RFC3339Nano)
	}
	return n
}
