package cli

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/parse"
	"bitsift/plan"
	"bitsift/profile"
	"bitsift/report"
	"bitsift/ui"
)

// profileFeed is the screen's Feed for a profile: the same counts every
// frame, with the detail the screen asks for. A profile has no records, so
// there is no window to change, no baseline to pin and no raw line to
// measure a plan on.
type profileFeed struct {
	p      *profile.Profile
	status parse.SourceStatus
}

func newProfileFeed(p *profile.Profile, name string) *profileFeed {
	return &profileFeed{p: p, status: parse.SourceStatus{Name: name, State: parse.StateDone, Lines: p.Lines,
		Note: fmt.Sprintf("count profile: %d records, measured from %s", p.Counts.Records, p.Measured)}}
}

func (f *profileFeed) Frame(ctx context.Context, opt model.SnapshotOptions) (*ingest.Frame, error) {
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	return &ingest.Frame{Snap: f.p.Snapshot(opt), Source: f.status, Ended: true}, nil
}

func (f *profileFeed) SetWindow(model.Window)            {}
func (f *profileFeed) SetBaseline(ingest.BaselineChoice) {}
func (f *profileFeed) Pacer() ingest.Pacer               { return nil }

func (f *profileFeed) Sample(context.Context) (*plan.Sample, error) {
	return nil, errNoLines
}

// Lines has nothing to show: a profile keeps counts, never the lines
// behind them.
func (f *profileFeed) Lines(context.Context, []model.Cond, int) ([]ingest.LineBehind, int, error) {
	return nil, 0, errNoLines
}

// SaveBaseline writes the profile's figures as a JSON report that
// --baseline reads, refusing to replace a file.
func (f *profileFeed) SaveBaseline(ctx context.Context, path string) error {
	if err := ctx.Err(); err != nil {
		return err
	}
	var b bytes.Buffer
	if err := report.WriteJSON(&b, report.Build(f.p.Snapshot(model.SnapshotOptions{Profile: true}))); err != nil {
		return err
	}
	out, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		return err
	}
	if _, err := out.Write(b.Bytes()); err != nil {
		out.Close()
		os.Remove(path)
		return err
	}
	return out.Close()
}

// errNoLines says why a plan from a profile is not measured.
var errNoLines = errors.New("a profile holds counts, not raw lines: the plan is not measured")

// showProfileScreen opens the screen on a profile.
func showProfileScreen(ctx context.Context, std IO, p *profile.Profile, name string) error {
	r := lipgloss.NewRenderer(std.Out)
	r.HasDarkBackground()
	m := ui.New(newProfileFeed(p, name), ui.Options{Renderer: r, Context: ctx, Windows: []ui.Window{{Kind: model.WindowAll}}})
	opts := []tea.ProgramOption{tea.WithContext(ctx), tea.WithOutput(std.Out), tea.WithAltScreen()}
	if stdinIsPipe() {
		opts = append(opts, tea.WithInputTTY())
	} else {
		opts = append(opts, tea.WithInput(std.In))
	}
	_, err := tea.NewProgram(m, opts...).Run()
	if errors.Is(err, tea.ErrProgramKilled) || errors.Is(err, tea.ErrInterrupted) {
		return nil
	}
	return err
}

// SetWhere: a profile holds counts, not records, so it cannot be narrowed.
func (f *profileFeed) SetWhere(context.Context, []model.Cond, []string) error {
	return errors.New("a profile holds counts, not records: it cannot be narrowed")
}
