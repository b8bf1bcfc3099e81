// Package ui is bitsift's live screen: the fields of a stream with their
// entropy in bits, the pairs of fields and how much one tells about the
// other, and one field up close, redrawn from the newest snapshot a few
// times a second while ingest runs on its own goroutine.
//
// The root Model routes messages to one small model per screen (fields.go,
// pairs.go, focus.go, drift.go, planner.go, intake.go); keys.go holds the
// bindings and styles.go the styles, built once. Frames come from a Feed on a tick tagged with a
// generation number, so pausing and resuming never stacks two tick loops.
package ui

import (
	"context"
	"time"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/plan"
)

// Feed hands out frames of a running stream; ingest.Live is one.
type Feed interface {
	// Frame returns the newest figures. It may wait a little; the screen
	// calls it off its own goroutine.
	Frame(ctx context.Context, opt model.SnapshotOptions) (*ingest.Frame, error)
	// SetWindow asks for the figures to cover another window; it does not
	// wait.
	SetWindow(w model.Window)
	// SetBaseline asks for a baseline (pin the window, or rolling); it
	// does not wait.
	SetBaseline(b ingest.BaselineChoice)
	// Sample returns a copy of the newest raw lines, to measure a drop
	// plan with; the screen calls it off its own goroutine, seldom.
	Sample(ctx context.Context) (*plan.Sample, error)
	// Pacer is the source's pace control (a replay), nil for a source
	// that cannot be paused.
	Pacer() ingest.Pacer
	// Lines returns the newest window records meeting every condition,
	// with their raw lines where kept (ingest.Ingester.LinesBehind), and
	// how many meet them; the screen calls it off its own goroutine.
	Lines(ctx context.Context, conds []model.Cond, limit int) ([]ingest.LineBehind, int, error)
	// SaveBaseline writes the window's profile, as a JSON report that
	// --baseline reads, to path; off the screen's goroutine.
	SaveBaseline(ctx context.Context, path string) error
	// SetWhere narrows the records taken from now on (none: all again).
	SetWhere(ctx context.Context, conds []model.Cond, text []string) error
}

// Options tune the screen. The zero value of a field means its default.
type Options struct {
	// Interval between frames (default and least 250 ms: at most 4 a
	// second).
	Interval time.Duration
	// HistoryEvery is the spacing of the entropy history's samples
	// (default 1 s; tests use a sample per frame with a negative value).
	HistoryEvery time.Duration
	// Windows are the windows the window key cycles through (default all,
	// 10k, 100k, 5m).
	Windows []model.Window
	// Renderer draws the styles: it knows the terminal's colours and
	// background (default: one for standard output).
	Renderer *lipgloss.Renderer
	// Context ends frame requests when done (default: never).
	Context context.Context
	// DeepEvery is the spacing of deep snapshots (surprising records,
	// determinants), taken while the Drift screen is on show (default
	// 5 s).
	DeepEvery time.Duration
	// MeasureEvery is how often the plan on show is measured again with
	// plan.Make while the Plan screen is on show (default 30 s; a pin
	// measures at once).
	MeasureEvery time.Duration
	// Baseline is the profile given with --baseline (nil: none); the
	// screen drops it for the rolling one, saying why, when the stream
	// shares too few of its fields (model.CheckBaseline).
	Baseline *model.Profile
	// Clock tells the time for "pinned at" and "measured at" (default
	// time.Now; tests fix it).
	Clock func() time.Time
	// Suspend is what ctrl+z runs (default tea.Suspend): the terminal is
	// given back and the process stopped until fg. The command line sets
	// one that goes through its own SIGTSTP handling, so that a ctrl+z and
	// a kill -TSTP suspend the same way.
	Suspend tea.Cmd
}

// DefaultWindows are the windows the window key cycles through.
var DefaultWindows = []model.Window{
	{Kind: model.WindowAll},
	{Kind: model.WindowRecords, Records: 10_000},
	{Kind: model.WindowRecords, Records: 100_000},
	{Kind: model.WindowDuration, Duration: 5 * time.Minute},
}

const minInterval = 250 * time.Millisecond

func (o Options) withDefaults() Options {
	if o.Interval < minInterval {
		o.Interval = minInterval
	}
	switch {
	case o.HistoryEvery == 0:
		o.HistoryEvery = time.Second
	case o.HistoryEvery < 0:
		o.HistoryEvery = 0
	}
	if len(o.Windows) == 0 {
		o.Windows = DefaultWindows
	}
	if o.Renderer == nil {
		o.Renderer = lipgloss.DefaultRenderer()
	}
	if o.Context == nil {
		o.Context = context.Background()
	}
	if o.DeepEvery <= 0 {
		o.DeepEvery = 5 * time.Second
	}
	if o.MeasureEvery <= 0 {
		o.MeasureEvery = 30 * time.Second
	}
	if o.Clock == nil {
		o.Clock = time.Now
	}
	return o
}

// Window is model.Window, for callers that build the window cycle.
type Window = model.Window
