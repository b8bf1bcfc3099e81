package ui

import (
	"strings"
	"time"

	"github.com/charmbracelet/bubbles/help"
	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/sanitize"
)

// screen is one of the four screens.
type screen int

const (
	screenFields screen = iota
	screenPairs
	screenFocus
	screenIntake
	numScreens
)

var screenNames = [numScreens]string{"Fields", "Pairs", "Focus", "Input"}

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
	intake       intakeView

	w, h     int
	gen      int // generation of the frame loop; a message of another is dropped
	paused   bool
	showHelp bool
	// pendingWindow is a window asked for and not yet in a frame.
	pendingWindow *model.Window
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

// New returns the screen over feed.
func New(feed Feed, opt Options) Model {
	opt = opt.withDefaults()
	e := &env{st: NewStyles(opt.Renderer), keys: DefaultKeys(), hist: newHistory(opt.HistoryEvery)}
	h := help.New()
	h.Styles.FullKey = e.st.HelpKey
	h.Styles.FullDesc = e.st.HelpDesc
	h.Styles.ShortKey = e.st.HelpKey
	h.Styles.ShortDesc = e.st.HelpDesc
	m := Model{
		opt: opt, feed: feed, e: e, help: h,
		fields: newFieldsView(e), pairs: newPairsView(e), focus: newFocusView(e), intake: newIntakeView(e),
		w: 80, h: 24,
	}
	return m.resize(80, 24)
}

// Init asks for the first frame at once.
func (m Model) Init() tea.Cmd { return m.fetch(false) }

// fetch requests a frame off the UI goroutine.
func (m Model) fetch(once bool) tea.Cmd {
	gen, opt, feed, ctx := m.gen, m.snapshotOptions(), m.feed, m.opt.Context
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
	return model.SnapshotOptions{
		TopValues: topValues, Detail: m.focus.field, DetailGiven: m.focus.given,
		DetailRows: 12, DetailTop: 6,
	}
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
		return m, m.fetch(false)
	case frameMsg:
		return m.onFrame(msg)
	case openMsg:
		m.focus = m.focus.show(msg.field, msg.given)
		m.back, m.screen = m.screen, screenFocus
		return m, m.fetch(true)
	case tea.KeyMsg:
		if msg.Type == tea.KeyRunes && len(msg.Runes) > 1 && !msg.Paste && !m.fields.capturing() {
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
	if msg.err != nil {
		if msg.err == ingest.ErrStopped || m.opt.Context.Err() != nil {
			return m, nil
		}
		return m, m.tick() // a passing fault: try again on the next tick
	}
	if !msg.once && (m.paused || msg.gen != m.gen) {
		return m, nil
	}
	m = m.apply(msg.frame)
	if msg.once {
		return m, nil
	}
	return m, m.tick()
}

// apply puts a frame on show.
func (m Model) apply(f *ingest.Frame) Model {
	m.e.frame = f
	m.e.hist.add(f.Snap, time.Now())
	if m.pendingWindow != nil && f.Snap.Window == *m.pendingWindow {
		m.pendingWindow = nil
	}
	m.fields = m.fields.refresh()
	m.pairs = m.pairs.refresh()
	m.focus = m.focus.refresh()
	m.intake = m.intake.refresh()
	return m
}

func (m Model) onKey(msg tea.KeyMsg) (tea.Model, tea.Cmd) {
	k := m.e.keys
	if msg.Type == tea.KeyCtrlC {
		return m, tea.Quit
	}
	if m.screen == screenFields && m.fields.capturing() {
		return m.toScreen(msg)
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
	case key.Matches(msg, k.Focus):
		if m.focus.field == "" {
			m.focus = m.focus.show(m.fields.selected(), "")
		}
		m = m.show(screenFocus)
	case key.Matches(msg, k.Intake):
		m = m.show(screenIntake)
	case key.Matches(msg, k.Rejected):
		m = m.show(screenIntake)
		m.intake = m.intake.jump("rejected")
	case key.Matches(msg, k.Events):
		m = m.show(screenIntake)
		m.intake = m.intake.jump("events")
	case key.Matches(msg, k.Pause):
		m.paused = !m.paused
		m.gen++
		if !m.paused {
			return m, m.fetch(false)
		}
	case key.Matches(msg, k.Window):
		return m.nextWindow()
	case key.Matches(msg, k.Back) && m.screen == screenFocus:
		m = m.show(m.back)
	default:
		return m.toScreen(msg)
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
		m.pairs, cmd = m.pairs.Update(msg)
	case screenFocus:
		before := m.focus.field
		m.focus, cmd = m.focus.Update(msg)
		if m.focus.field != before {
			cmd = m.fetch(true) // the detail of the new field
		}
	case screenIntake:
		m.intake, cmd = m.intake.Update(msg)
	}
	return m, cmd
}

// nextWindow asks for the next window in the cycle.
func (m Model) nextWindow() (tea.Model, tea.Cmd) {
	cur := model.Window{Kind: model.WindowAll}
	if m.pendingWindow != nil {
		cur = *m.pendingWindow
	} else if m.e.frame != nil {
		cur = m.e.frame.Snap.Window
	}
	next := m.opt.Windows[0]
	for i, w := range m.opt.Windows {
		if w == cur {
			next = m.opt.Windows[(i+1)%len(m.opt.Windows)]
		}
	}
	m.feed.SetWindow(next)
	m.pendingWindow = &next
	if m.paused {
		return m, nil
	}
	return m, m.fetch(true)
}

// Sizes of the frame around the screens.
const (
	topLines    = 1
	statusLines = 2
)

// resize lays every screen out for a terminal of w×h cells.
func (m Model) resize(w, h int) Model {
	m.w, m.h = w, h
	ch := max(1, h-topLines-statusLines)
	m.help.Width = w
	m.fields = m.fields.setSize(w, ch)
	m.pairs = m.pairs.setSize(w, ch)
	m.focus = m.focus.setSize(w, ch)
	m.intake = m.intake.setSize(w, ch)
	return m
}

// View draws the top line, the screen (or the help page) and the status
// lines.
func (m Model) View() string {
	if m.w < 40 || m.h < 10 {
		return "bitsift needs at least 40×10 cells (80×24 to see it all); q quits"
	}
	ch := max(1, m.h-topLines-statusLines)
	var body string
	switch {
	case m.showHelp:
		body = m.helpPage(ch)
	case m.screen == screenFields:
		body = m.fields.View()
	case m.screen == screenPairs:
		body = m.pairs.View()
	case m.screen == screenFocus:
		body = m.focus.View()
	default:
		body = m.intake.View()
	}
	st := m.statusLines()
	return m.topLine() + "\n" + body + "\n" + st[0] + "\n" + st[1]
}

func (m Model) topLine() string {
	st := m.e.st
	parts := []string{st.Title.Render(" bitsift ")}
	for i, name := range screenNames {
		label := string(rune('1'+i)) + " " + name
		if screen(i) == screenFocus && m.focus.field != "" {
			label += ": " + sanitize.Fit(m.focus.field, 16)
		}
		if screen(i) == m.screen && !m.showHelp {
			parts = append(parts, st.TabActive.Render("["+label+"]"))
		} else {
			parts = append(parts, st.Tab.Render(" "+label+" "))
		}
	}
	line := strings.Join(parts, " ")
	if m.showHelp {
		line += " " + st.TabActive.Render("[? keys]")
	}
	return ansiFit(line, m.w)
}

// helpPage is the grouped key help, in one row of groups when wide, else
// two.
func (m Model) helpPage(h int) string {
	groups := m.e.keys.FullHelp()
	titled := make([][]key.Binding, len(groups))
	for i, g := range groups {
		head := key.NewBinding(key.WithKeys("\x00"+helpGroups[i]), key.WithHelp(strings.ToUpper(helpGroups[i]), ""))
		titled[i] = append([]key.Binding{head}, g...)
	}
	var rows []string
	if m.w >= 130 {
		rows = []string{m.help.FullHelpView(titled)}
	} else {
		rows = []string{m.help.FullHelpView(titled[:2]), "", m.help.FullHelpView(titled[2:])}
	}
	lines := strings.Split(strings.Join(rows, "\n"), "\n")
	lines = append([]string{""}, lines...)
	for i := range lines {
		lines[i] = " " + lines[i]
	}
	lines = append(lines, "", m.e.st.Muted.Render(" space pauses the display only: ingest goes on. ? or esc closes this page."))
	return fill(lines, h)
}
