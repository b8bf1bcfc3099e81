package ui

import "github.com/charmbracelet/bubbles/key"

// KeyMap holds every key binding of the screen. It satisfies help.KeyMap:
// ShortHelp for the hint line, FullHelp for the grouped help page.
type KeyMap struct {
	Up, Down, Left, Right key.Binding
	PageUp, PageDown      key.Binding
	Top, Bottom           key.Binding
	Next, Prev            key.Binding
	Fields, Pairs, Focus  key.Binding
	Drift, Plan, Intake   key.Binding
	Open, Back            key.Binding
	Sort, Reverse, Filter key.Binding
	Window, Pause, Step   key.Binding
	PinBase, Rolling      key.Binding
	Keep, Drop, Unpin     key.Binding
	Rejected, Events      key.Binding
	SaveBase, WriteScreen key.Binding
	Shade                 key.Binding
	PrevGiven, NextGiven  key.Binding
	Narrow                key.Binding
	Help, Quit            key.Binding
}

// DefaultKeys returns the bindings documented in the README.
func DefaultKeys() KeyMap {
	b := func(help, desc string, keys ...string) key.Binding {
		return key.NewBinding(key.WithKeys(keys...), key.WithHelp(help, desc))
	}
	return KeyMap{
		Up:          b("↑/k", "up", "up", "k"),
		Down:        b("↓/j", "down", "down", "j"),
		Left:        b("←/h", "left · prev field", "left", "h"),
		Right:       b("→/l", "right · next field", "right", "l"),
		PageUp:      b("pgup", "page up", "pgup", "ctrl+b"),
		PageDown:    b("pgdn", "page down", "pgdown", "ctrl+f"),
		Top:         b("g/home", "first", "home", "g"),
		Bottom:      b("G/end", "last", "end", "G"),
		Next:        b("tab", "next screen", "tab"),
		Prev:        b("shift+tab", "previous screen", "shift+tab"),
		Fields:      b("1", "fields", "1"),
		Pairs:       b("2", "pairs", "2"),
		Focus:       b("3", "one field · cell", "3"),
		Drift:       b("4", "what changed", "4"),
		Plan:        b("5", "drop plan", "5"),
		Intake:      b("6", "input", "6"),
		Open:        b("enter", "open field · lines", "enter"),
		Back:        b("esc", "back · clear filter", "esc"),
		Sort:        b("s", "sort by next column", "s"),
		Reverse:     b("S", "reverse sort", "S"),
		Filter:      b("/", "filter fields by name", "/"),
		Window:      b("w", "change window", "w"),
		Pause:       b("space", "pause display · replay", " "),
		Step:        b("n", "replay: one window on", "n"),
		PinBase:     b("b", "pin window as baseline", "b"),
		Rolling:     b("B", "rolling baseline", "B"),
		Keep:        b("+", "plan: keep field", "+"),
		Drop:        b("x", "plan: drop field", "x"),
		Unpin:       b("u", "plan: unpin field", "u"),
		Rejected:    b("r", "rejected lines", "r"),
		SaveBase:    b("f", "save baseline file", "f"),
		Shade:       b("v", "pairs: RFI or raw", "v"),
		PrevGiven:   b("[", "focus: previous given", "["),
		Narrow:      b(":", "narrow: where…", ":"),
		NextGiven:   b("[ ]", "given · value pair", "]"),
		WriteScreen: b("o", "save screen as .md, .json", "o"),
		Events:      b("e", "source events", "e"),
		Help:        b("?", "keys", "?"),
		Quit:        b("q", "quit", "q", "ctrl+c"),
	}
}

// ShortHelp implements help.KeyMap: the hint line.
func (k KeyMap) ShortHelp() []key.Binding {
	return []key.Binding{k.Next, k.Open, k.Pause, k.Window, k.Help, k.Quit}
}

// FullHelp implements help.KeyMap: the help page, one column per group.
func (k KeyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{
		{k.Up, k.Down, k.Left, k.Right, k.PageUp, k.PageDown, k.Top, k.Bottom},
		{k.Next, k.Prev, k.Fields, k.Pairs, k.Focus, k.Drift, k.Plan, k.Intake, k.Open, k.Back},
		{k.Rejected, k.Events, k.Narrow, k.Help, k.Quit},
		{k.Sort, k.Reverse, k.Filter, k.Window, k.Pause, k.Step, k.Shade, k.NextGiven},
		{k.PinBase, k.Rolling, k.SaveBase, k.WriteScreen, k.Keep, k.Drop, k.Unpin},
	}
}

// helpGroups names the FullHelp columns, in order. At 80 columns the
// first three make one row and the last two another.
var helpGroups = []string{"move", "screens", "other", "view", "drift · plan"}
