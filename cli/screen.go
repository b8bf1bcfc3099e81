package cli

import (
	"context"
	"errors"
	"time"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/parse"
	"bitsift/ui"
)

// showScreen runs the live screen over src until the user quits, ctx is
// done, or a signal arrives; the terminal is restored in every case. Keys
// come from the terminal itself when standard input carries the log.
func showScreen(ctx context.Context, std IO, cfg ingest.Config, src parse.Source, so screenOptions) error {
	in, err := ingest.New(cfg)
	if err != nil {
		return &ExitError{Code: ExitUsage, Err: err}
	}
	// The screen compares with --baseline from the first frame, else with
	// the previous windows until the user pins one (ingest.Live.SetBaseline).
	if so.base != nil {
		in.SetBaseline(so.base)
	} else {
		in.UseRollingBaseline()
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	selfStopping.Store(true) // the screen restores the terminal, then ends
	live := ui.StartLive(ctx, in, src)
	defer func() {
		// A snapshot being taken gives up when ctx ends (the deep
		// analyses look at it as they go); the process is ending, so it
		// waits only briefly for that: quitting never waits for them.
		cancel()
		select {
		case <-live.Done():
		case <-time.After(quitWait):
		}
	}()

	r := lipgloss.NewRenderer(std.Out)
	// Ask the terminal for its background now, before the screen reads
	// the keyboard: the answer would otherwise arrive as keys.
	r.HasDarkBackground()
	windows := ui.DefaultWindows
	if w := cfg.Model.Window; !containsWindow(windows, w) {
		windows = append([]ui.Window{w}, windows...)
	}
	m := ui.New(live, ui.Options{Renderer: r, Context: ctx, Windows: windows, Baseline: so.base})
	opts := []tea.ProgramOption{
		tea.WithContext(ctx), tea.WithOutput(std.Out), tea.WithAltScreen(),
	}
	if so.mouse {
		// Off unless asked: mouse reporting stops a person selecting
		// text to copy.
		opts = append(opts, tea.WithMouseCellMotion())
	}
	if stdinIsPipe() {
		opts = append(opts, tea.WithInputTTY())
	} else {
		opts = append(opts, tea.WithInput(std.In))
	}
	_, err = tea.NewProgram(m, opts...).Run()
	if errors.Is(err, tea.ErrProgramKilled) || errors.Is(err, tea.ErrInterrupted) {
		return nil
	}
	return err
}

// quitWait is how long quitting waits for the live reader to stop.
const quitWait = 50 * time.Millisecond

// screenOptions are what the commands that show the screen pass it.
type screenOptions struct {
	base  *model.Profile // --baseline: compare with it from the first frame
	mouse bool           // --mouse: the wheel scrolls (text selection then needs shift)
}

func containsWindow(ws []ui.Window, w ui.Window) bool {
	for _, x := range ws {
		if x == w {
			return true
		}
	}
	return false
}
