package ui

import (
	"context"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	"github.com/charmbracelet/bubbles/textinput"
	tea "github.com/charmbracelet/bubbletea"

	"bitsift/model"
)

// narrowPrompt is the filter prompt (":"): conditions as --where takes
// them (FIELD=VALUE, FIELD!=VALUE, FIELD~REGEXP, FIELD!~REGEXP), separated
// by spaces, all to hold. Enter narrows the records taken from then on;
// an empty line takes every record again. Records already in the window
// stay until they leave it, and the status line says so.
type narrowPrompt struct {
	on    bool
	input textinput.Model
}

func newNarrowPrompt() narrowPrompt {
	ti := textinput.New()
	ti.Prompt = "where: "
	ti.Placeholder = "host=qs-api-07 route~^/v1/berths (esc cancels)"
	ti.CharLimit = 256
	return narrowPrompt{input: ti}
}

// SetWhere on the live feed narrows on the owner goroutine.
func (f *LiveFeed) SetWhere(ctx context.Context, conds []model.Cond, text []string) error {
	return f.Visit(ctx, func() { f.in.SetWhere(conds, text) })
}

// narrowKey handles a key while the prompt is open.
func (m Model) narrowKey(msg tea.KeyMsg) (tea.Model, tea.Cmd) {
	k := m.e.keys
	switch {
	case key.Matches(msg, k.Back):
		m.narrow.on = false
		m.narrow.input.Blur()
		return m, nil
	case msg.Type == tea.KeyEnter:
		m.narrow.on = false
		m.narrow.input.Blur()
		text := strings.Fields(m.narrow.input.Value())
		var conds []model.Cond
		for _, t := range text {
			c, err := model.ParseCond(t)
			if err != nil {
				m.say(err.Error())
				return m, nil
			}
			conds = append(conds, c)
		}
		feed, ctx := m.feed, m.opt.Context
		line := int64(0)
		if f := m.e.frame; f != nil {
			line = f.Source.Lines
		}
		return m, func() tea.Msg {
			if err := feed.SetWhere(ctx, conds, text); err != nil {
				return savedMsg{"not narrowed: " + err.Error()}
			}
			if len(conds) == 0 {
				return savedMsg{"every record taken again from line " + count(line) + " on"}
			}
			return savedMsg{"narrowed to " + strings.Join(text, " ") + " from line " + count(line) +
				" on; records before stay until they leave the window (filtered: Input screen)"}
		}
	}
	var cmd tea.Cmd
	m.narrow.input, cmd = m.narrow.input.Update(msg)
	return m, cmd
}
