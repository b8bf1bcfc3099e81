package ui

import (
	"time"

	"github.com/charmbracelet/bubbles/help"
	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/plan"
)

// screen is one of the six screens.
type screen int

const (
	screenFields screen = iota
	screenPairs
	screenFocus
	screenDrift
	screenPlan
	screenIntake
	numScreens
)

var screenNames = [numScreens]string{"Fields", "Pairs", "Focus", "Drift", "Plan", "Input"}

// Model is the root of the screen: it owns the frame loop and routes
// messages to the screen on show.
type Model struct {
	opt  Options
	feed Feed
	e    *env
	help help.Model

	screen, back screen
	fields       fieldsView
	pairs        pairsView
	focus        focusView
	drift        driftView
	planner      plannerView
	intake       intakeView
	// lines shows the lines behind a finding over the screen, while
	// showLines (esc closes it).
	lines     linesView
	showLines bool
	// narrow is the filter prompt (":").
	narrow narrowPrompt

	w, h     int
	gen      int // generation of the frame loop; a message of another is dropped
	paused   bool
	showHelp bool
	// pendingWindow is a window asked for and not yet in a frame.
	pendingWindow *model.Window
	// deepAt is when the last deep snapshot was asked for.
	deepAt time.Time
	// onceBusy: a frame asked for outside the loop is on its way;
	// onceAgain: another was asked for meanwhile (see fetchOnce).
	onceBusy, onceAgain bool
	// flash is a short answer to the last key ("baseline pinned"), shown
	// on the status line until the next key or for flashFor.
	flash   string
	flashAt time.Time
}

// flashFor is how long an answer to a key stays on the status line.
const flashFor = 6 * time.Second

// say puts an answer to a key on the status line.
func (m *Model) say(s string) {
	m.flash, m.flashAt = s, m.e.now()
}

// tickMsg starts the next frame request of loop gen.
type tickMsg struct{ gen int }

// frameMsg is a frame for loop gen; once is a frame asked for outside the
// loop (after opening a field or changing the window), which does not
// schedule a tick.
type frameMsg struct {
	gen   int
	once  bool
	frame *ingest.Frame
	err   error
}

// measuredMsg is the end of a background plan.Make for the pins of
// version ver.
type measuredMsg struct {
	ver  int
	plan *plan.Plan
	err  error
}

// New returns the screen over feed.
func New(feed Feed, opt Options) Model {
	opt = opt.withDefaults()
	e := &env{st: NewStyles(opt.Renderer), keys: DefaultKeys(), hist: newHistory(opt.HistoryEvery), now: opt.Clock,
		timeline: &model.TimelineBook{}}
	h := help.New()
	h.Styles.FullKey = e.st.HelpKey
	h.Styles.FullDesc = e.st.HelpDesc
	h.Styles.ShortKey = e.st.HelpKey
	h.Styles.ShortDesc = e.st.HelpDesc
	h.FullSeparator = "  "
	m := Model{
		opt: opt, feed: feed, e: e, help: h, narrow: newNarrowPrompt(),
		fields: newFieldsView(e), pairs: newPairsView(e), focus: newFocusView(e),
		drift: newDriftView(e), planner: newPlannerView(e), intake: newIntakeView(e),
		w: 80, h: 24,
	}
	return m.resize(80, 24)
}

// Init asks for the first frame at once.
func (m Model) Init() tea.Cmd { return m.fetch(false) }

// fetch requests a frame off the UI goroutine.
func (m Model) fetch(once bool) tea.Cmd { return m.fetchOpt(once, m.snapshotOptions()) }

// fetchDeep requests a frame, deep when one is due: while the Drift screen
// is on show, every DeepEvery (a deep snapshot scans the window's records).
func (m Model) fetchDeep(once bool) (Model, tea.Cmd) {
	opt := m.snapshotOptions()
	if now := m.e.now(); m.screen == screenDrift && now.Sub(m.deepAt) >= m.opt.DeepEvery {
		opt.Deep, opt.Surprising = true, surprisingShown
		m.deepAt = now
	}
	return m, m.fetchOpt(once, opt)
}

// fetchOnce asks for a frame outside the loop, after a key that changes
// what a frame holds (a Pairs cell, a Focus field, the window, the
// baseline, a replay step), deep when one is due (fetchDeep). At most one
// is on its way: each snapshot holds up ingest for tens of ms, and a key
// held down (the arrows over the Pairs cells) would otherwise queue one
// per repeat on the owner goroutine, starving ingest and showing each
// answer later than the last. Asked for meanwhile, it is asked for once
// more when the answer comes, with what the screen then wants.
func (m Model) fetchOnce() (Model, tea.Cmd) {
	if m.onceBusy {
		m.onceAgain = true
		return m, nil
	}
	m.onceBusy = true
	return m.fetchDeep(true)
}

func (m Model) fetchOpt(once bool, opt model.SnapshotOptions) tea.Cmd {
	gen, feed, ctx := m.gen, m.feed, m.opt.Context
	return func() tea.Msg {
		f, err := feed.Frame(ctx, opt)
		return frameMsg{gen: gen, once: once, frame: f, err: err}
	}
}

func (m Model) tick() tea.Cmd {
	gen := m.gen
	return tea.Tick(m.opt.Interval, func(time.Time) tea.Msg { return tickMsg{gen} })
}

// topValues is how many values of each field a frame carries.
const topValues = 16

func (m Model) snapshotOptions() model.SnapshotOptions {
	o := model.SnapshotOptions{
		TopValues: topValues, Detail: m.focus.field, DetailGiven: m.focus.given,
		DetailRows: 12, DetailTop: 6,
	}
	if p := m.pairs; m.screen == screenPairs && p.selR != "" && p.selR != p.selC {
		// The Pairs screen breaks the cell under the cursor down by value.
		o.Detail, o.DetailGiven = p.selR, p.selC
	}
	return o
}

// Update routes a message: frames and ticks here, keys and the mouse to
// the screen on show.
func (m Model) Update(msg tea.Msg) (tea.Model, tea.Cmd) {
	switch msg := msg.(type) {
	case tea.WindowSizeMsg:
		return m.resize(msg.Width, msg.Height), nil
	case tickMsg:
		if msg.gen != m.gen || m.paused {
			return m, nil
		}
		return m.fetchDeep(false)
	case frameMsg:
		return m.onFrame(msg)
	case measuredMsg:
		m.planner = m.planner.measured(msg.ver, msg.plan, msg.err)
		return m, nil
	case openLinesMsg:
		m.lines = newLinesView(m.e, msg.title, msg.conds, m.w, max(1, m.h-topLines-statusLines))
		m.showLines, m.showHelp = true, false
		return m, fetchLines(m.opt.Context, m.feed, msg.conds)
	case savedMsg:
		m.say(msg.text)
		return m, nil
	case linesMsg:
		m.lines = m.lines.answer(msg)
		return m, nil
	case openMsg:
		m.focus = m.focus.show(msg.field, msg.given)
		m.back, m.screen = m.screen, screenFocus
		return m.fetchOnce()
	case tea.KeyMsg:
		if msg.Type == tea.KeyRunes && len(msg.Runes) > 1 && !msg.Paste && !m.fields.capturing() && !m.narrow.on {
			// Keys typed faster than the screen reads them arrive
			// together: take them one by one.
			return m.eachRune(msg.Runes)
		}
		return m.onKey(msg)
	case tea.MouseMsg:
		return m.toScreen(msg)
	}
	return m, nil
}

func (m Model) eachRune(rs []rune) (tea.Model, tea.Cmd) {
	var cmds []tea.Cmd
	var next tea.Model = m
	for _, r := range rs {
		var cmd tea.Cmd
		next, cmd = next.(Model).onKey(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune{r}})
		cmds = append(cmds, cmd)
	}
	return next, tea.Sequence(cmds...)
}

func (m Model) onFrame(msg frameMsg) (tea.Model, tea.Cmd) {
	if !msg.once {
		return m.takeFrame(msg)
	}
	m.onceBusy = false
	m, cmd := m.takeFrame(msg)
	if m.onceAgain && msg.err != ingest.ErrStopped && m.opt.Context.Err() == nil {
		m.onceAgain = false
		var again tea.Cmd
		m, again = m.fetchOnce()
		cmd = tea.Batch(cmd, again)
	}
	return m, cmd
}

// takeFrame puts a frame on show, and schedules the loop's next one.
func (m Model) takeFrame(msg frameMsg) (Model, tea.Cmd) {
	if msg.err != nil {
		if msg.once || msg.err == ingest.ErrStopped || m.opt.Context.Err() != nil {
			return m, nil // a frame outside the loop must not start another loop
		}
		return m, m.tick() // a passing fault: try again on the next tick
	}
	if !msg.once && (m.paused || msg.gen != m.gen) {
		return m, nil
	}
	m = m.apply(msg.frame)
	measure := m.maybeMeasure()
	if msg.once {
		return m, measure
	}
	return m, tea.Batch(m.tick(), measure)
}

// maybeMeasure starts a background measurement of the plan on show when
// one is due (see plannerView.due).
func (m *Model) maybeMeasure() tea.Cmd {
	if m.screen != screenPlan || m.e.frame == nil {
		return nil
	}
	var ok bool
	m.planner, ok = m.planner.due(m.opt.MeasureEvery)
	if !ok {
		return nil
	}
	feed, ctx, snap := m.feed, m.opt.Context, m.e.frame.Snap
	ver, opt := m.planner.ver, m.planner.options()
	return func() tea.Msg {
		smp, err := feed.Sample(ctx)
		if err != nil {
			return measuredMsg{ver: ver, err: err}
		}
		smp.Keep(snap.Records)
		opt.Batch = smp.Len()
		p, err := plan.Make(snap, smp, opt)
		return measuredMsg{ver: ver, plan: p, err: err}
	}
}

// apply puts a frame on show.
func (m Model) apply(f *ingest.Frame) Model {
	m.e.frame = f
	if f.Deep {
		m.e.deep = f
	}
	// Replays sample the history in log time, so a sparkline spans
	// the records' own minutes whatever the speed; live sources on the
	// injected clock.
	at := m.e.now()
	if m.feed.Pacer() != nil && f.Snap.Newest != 0 {
		at = time.Unix(0, f.Snap.Newest)
	}
	m.e.hist.add(f.Snap, at)
	m.e.timeline.Note(f.Snap, model.Trace{File: f.Source.Name, Line: f.Source.Lines, Time: f.Snap.Newest})
	m = m.checkBaseline(f)
	if m.pendingWindow != nil && f.Snap.Window == *m.pendingWindow {
		m.pendingWindow = nil
	}
	m.fields = m.fields.refresh()
	m.pairs = m.pairs.refresh()
	m.focus = m.focus.refresh()
	m.drift = m.drift.refresh()
	m.planner = m.planner.refresh()
	m.intake = m.intake.refresh()
	return m
}

func (m Model) onKey(msg tea.KeyMsg) (tea.Model, tea.Cmd) {
	k := m.e.keys
	if msg.Type == tea.KeyCtrlC {
		return m, tea.Quit
	}
	if msg.Type == tea.KeyCtrlZ {
		// Raw input makes ctrl+z a key: suspend as the shell would, with
		// the terminal given back first (fg brings the screen back).
		if m.opt.Suspend != nil {
			return m, m.opt.Suspend
		}
		return m, tea.Suspend
	}
	if m.screen == screenFields && m.fields.capturing() {
		return m.toScreen(msg)
	}
	if m.narrow.on {
		return m.narrowKey(msg)
	}
	m.flash = ""
	before := m.screen
	if m.showLines && !key.Matches(msg, k.Quit) && !key.Matches(msg, k.Help) {
		if key.Matches(msg, k.Back) {
			m.showLines = false
			return m, nil
		}
		var cmd tea.Cmd
		m.lines, cmd = m.lines.Update(msg)
		return m, cmd
	}
	switch {
	case key.Matches(msg, k.Quit):
		return m, tea.Quit
	case key.Matches(msg, k.Help):
		m.showHelp = !m.showHelp
	case m.showHelp && key.Matches(msg, k.Back):
		m.showHelp = false
	case key.Matches(msg, k.Next):
		m = m.show((m.screen + 1) % numScreens)
	case key.Matches(msg, k.Prev):
		m = m.show((m.screen + numScreens - 1) % numScreens)
	case key.Matches(msg, k.Fields):
		m = m.show(screenFields)
	case key.Matches(msg, k.Pairs):
		m = m.show(screenPairs)
	case key.Matches(msg, k.Focus) && m.screen == screenPairs && m.pairs.selR != m.pairs.selC:
		// From a cell: its row field given its column field, up close.
		return m, open(m.pairs.selR, m.pairs.selC)
	case key.Matches(msg, k.Focus):
		if m.focus.field == "" {
			m.focus = m.focus.show(m.fields.selected(), "")
		}
		m = m.show(screenFocus)
	case key.Matches(msg, k.Drift):
		m = m.show(screenDrift)
	case key.Matches(msg, k.Plan):
		m = m.show(screenPlan)
	case key.Matches(msg, k.Intake):
		m = m.show(screenIntake)
	case key.Matches(msg, k.Rejected):
		m = m.show(screenIntake)
		m.intake = m.intake.jump("rejected")
	case key.Matches(msg, k.Events):
		m = m.show(screenIntake)
		m.intake = m.intake.jump("events")
	case key.Matches(msg, k.Pause):
		return m.pause()
	case key.Matches(msg, k.Step):
		return m.step()
	case key.Matches(msg, k.PinBase):
		m.feed.SetBaseline(ingest.PinWindow)
		m.e.pinnedAt = m.e.now()
		m.say("baseline: this window, pinned at " + m.e.pinnedAt.Format("15:04:05") + " (B: rolling)")
		m.deepAt = time.Time{}
		return m.fetchOnce()
	case key.Matches(msg, k.Rolling):
		m.feed.SetBaseline(ingest.Rolling)
		m.say("baseline: rolling, the window as it was one to two window lengths ago")
		m.deepAt = time.Time{}
		return m.fetchOnce()
	case key.Matches(msg, k.Window):
		return m.nextWindow()
	case key.Matches(msg, k.Narrow):
		m.narrow.on = true
		return m, m.narrow.input.Focus()
	case key.Matches(msg, k.SaveBase):
		return m, m.saveBaseline()
	case key.Matches(msg, k.WriteScreen):
		m.say(m.writeScreen())
		return m, nil
	case key.Matches(msg, k.Back) && m.screen == screenFocus:
		m = m.show(m.back)
	default:
		return m.toScreen(msg)
	}
	return m.arrive(before)
}

// arrive asks for what a screen just switched to needs: a deep frame for
// Drift when one is due, a measurement for Plan.
func (m Model) arrive(before screen) (tea.Model, tea.Cmd) {
	if m.screen == before || m.paused {
		return m, nil
	}
	switch m.screen {
	case screenDrift:
		if m.e.now().Sub(m.deepAt) >= m.opt.DeepEvery {
			return m.fetchOnce()
		}
	case screenPlan:
		return m, m.maybeMeasure()
	}
	return m, nil
}

// show switches screens, closing the help page.
func (m Model) show(s screen) Model {
	if s != m.screen && s == screenFocus {
		m.back = m.screen
	}
	m.screen, m.showHelp = s, false
	return m
}

// toScreen hands a message to the screen on show.
func (m Model) toScreen(msg tea.Msg) (tea.Model, tea.Cmd) {
	var cmd tea.Cmd
	switch m.screen {
	case screenFields:
		m.fields, cmd = m.fields.Update(msg)
	case screenPairs:
		r, c := m.pairs.selR, m.pairs.selC
		m.pairs, cmd = m.pairs.Update(msg)
		if cmd == nil && (m.pairs.selR != r || m.pairs.selC != c) {
			m, cmd = m.fetchOnce() // the breakdown of the new cell
		}
	case screenFocus:
		before := m.focus.field
		m.focus, cmd = m.focus.Update(msg)
		if m.focus.field != before {
			m, cmd = m.fetchOnce() // the detail of the new field
		}
	case screenDrift:
		m.drift, cmd = m.drift.Update(msg)
	case screenPlan:
		m.planner, cmd = m.planner.Update(msg)
		return m, tea.Batch(cmd, m.maybeMeasure())
	case screenIntake:
		m.intake, cmd = m.intake.Update(msg)
	}
	return m, cmd
}
