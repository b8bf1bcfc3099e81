package ui

// The root's frame around the screens: layout, the tab line, the help page.

import (
	"strings"

	"github.com/charmbracelet/bubbles/key"

	"bitsift/sanitize"
)

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
	m.drift = m.drift.setSize(w, ch)
	m.planner = m.planner.setSize(w, ch)
	m.intake = m.intake.setSize(w, ch)
	m.lines = m.lines.setSize(w, ch)
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
	case m.showLines:
		body = m.lines.View()
	case m.screen == screenFields:
		body = m.fields.View()
	case m.screen == screenPairs:
		body = m.pairs.View()
	case m.screen == screenFocus:
		body = m.focus.View()
	case m.screen == screenDrift:
		body = m.drift.View()
	case m.screen == screenPlan:
		body = m.planner.View()
	default:
		body = m.intake.View()
	}
	st := m.statusLines()
	if m.narrow.on {
		st[1] = ansiFit(" "+m.narrow.input.View(), m.w)
	}
	return m.topLine() + "\n" + body + "\n" + st[0] + "\n" + st[1]
}

func (m Model) topLine() string {
	st := m.e.st
	labels := make([]string, numScreens)
	width := 9 // " bitsift "
	for i, name := range screenNames {
		labels[i] = string(rune('1'+i)) + " " + name
		if screen(i) == screenDrift {
			if n := m.drift.alerts(); n > 0 {
				labels[i] += " !" + count(int64(n))
			}
		}
		width += sanitize.Width(labels[i]) + 3
	}
	if m.focus.field != "" {
		// The field's name goes on its tab as far as the line has room.
		if room := m.w - width - 2; room >= 4 {
			labels[screenFocus] += ": " + sanitize.Fit(m.focus.field, min(16, room))
		}
	}
	parts := []string{st.Title.Render(" bitsift ")}
	for i, label := range labels {
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

// helpPage is the grouped key help: the groups packed into as few rows as
// the width allows.
func (m Model) helpPage(h int) string {
	groups := m.e.keys.FullHelp()
	titled := make([][]key.Binding, len(groups))
	for i, g := range groups {
		head := key.NewBinding(key.WithKeys("\x00"+helpGroups[i]), key.WithHelp(strings.ToUpper(helpGroups[i]), ""))
		titled[i] = append([]key.Binding{head}, g...)
	}
	var rows []string
	var row [][]key.Binding
	flush := func() {
		if len(row) > 0 {
			if len(rows) > 0 {
				rows = append(rows, "")
			}
			rows = append(rows, m.help.FullHelpView(row))
			row = nil
		}
	}
	// Measured without the help model's own cut at the width.
	whole := m.help
	whole.Width = 0
	for _, g := range titled {
		wide := append(append([][]key.Binding(nil), row...), g)
		if len(row) > 0 && maxWidth(whole.FullHelpView(wide)) > m.w-2 {
			flush()
		}
		row = append(row, g)
	}
	flush()
	lines := strings.Split(strings.Join(rows, "\n"), "\n")
	for i := range lines {
		lines[i] = " " + lines[i]
	}
	note := " space pauses the display only: ingest goes on. ? or esc closes this page."
	if m.feed.Pacer() != nil {
		note = " space pauses the replay itself; n lets one window through. ? or esc closes this page."
	}
	lines = append(lines, "", m.e.st.Muted.Render(ansiFit(note, m.w)))
	return fill(lines, h)
}

// maxWidth is the widest line of s, in cells.
func maxWidth(s string) int {
	w := 0
	for _, l := range strings.Split(s, "\n") {
		w = max(w, sanitize.Width(ansiStrip(l)))
	}
	return w
}
