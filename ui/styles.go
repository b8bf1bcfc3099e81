package ui

import "github.com/charmbracelet/lipgloss"

// palette is the screen's colours, each a pair for light and dark
// backgrounds. Every meaning they carry is also carried by text or glyphs,
// so the screen reads the same with NO_COLOR or on a terminal without
// colour (lipgloss then drops the colours).
type palette struct {
	fg, muted, accent, accentBg, good, warn, bad lipgloss.AdaptiveColor
	heat                                         [5]lipgloss.AdaptiveColor
	split                                        [3]lipgloss.AdaptiveColor
}

var harbour = palette{
	fg:       lipgloss.AdaptiveColor{Light: "#1B2A33", Dark: "#DCE6EA"},
	muted:    lipgloss.AdaptiveColor{Light: "#6B7A82", Dark: "#7F9099"},
	accent:   lipgloss.AdaptiveColor{Light: "#0B6E79", Dark: "#4FC3CF"},
	accentBg: lipgloss.AdaptiveColor{Light: "#CBE9EC", Dark: "#123F45"},
	good:     lipgloss.AdaptiveColor{Light: "#2E7D32", Dark: "#7BC67E"},
	warn:     lipgloss.AdaptiveColor{Light: "#9A5B00", Dark: "#E8B04A"},
	bad:      lipgloss.AdaptiveColor{Light: "#B3261E", Dark: "#F2867E"},
	// From "the column determines the row" to "tells little".
	heat: [5]lipgloss.AdaptiveColor{
		{Light: "#0B4F6C", Dark: "#7FDBE6"},
		{Light: "#1F7A8C", Dark: "#4FB3C1"},
		{Light: "#5AA3AF", Dark: "#2F8592"},
		{Light: "#9CC7CE", Dark: "#245F68"},
		{Light: "#C9C9C9", Dark: "#3A4448"},
	},
	// H(row|col) | I | H(col|row).
	split: [3]lipgloss.AdaptiveColor{
		{Light: "#0B6E79", Dark: "#4FC3CF"},
		{Light: "#9A5B00", Dark: "#E8B04A"},
		{Light: "#6B4C9A", Dark: "#B79CE0"},
	},
}

// Styles are every style the screen draws with, built once.
type Styles struct {
	Text, Muted, Header, Title lipgloss.Style
	Tab, TabActive             lipgloss.Style
	Cursor                     lipgloss.Style // the row or cell under the cursor
	Bar, BarEmpty              lipgloss.Style
	Good, Warn, Bad            lipgloss.Style
	Badge                      map[string]lipgloss.Style // by source state, and "paused"
	Kind                       map[string]lipgloss.Style // by model.Kind
	Heat                       [5]lipgloss.Style
	Diagonal                   lipgloss.Style
	Split                      [3]lipgloss.Style
	Spark                      lipgloss.Style
	HelpKey, HelpDesc          lipgloss.Style
}

// NewStyles builds the styles for renderer r (which knows the terminal's
// colour support and background).
func NewStyles(r *lipgloss.Renderer) Styles {
	p := harbour
	st := func() lipgloss.Style { return r.NewStyle() }
	badge := func(c lipgloss.AdaptiveColor) lipgloss.Style {
		return st().Bold(true).Foreground(c)
	}
	s := Styles{
		Text:      st().Foreground(p.fg),
		Muted:     st().Foreground(p.muted),
		Header:    st().Foreground(p.muted).Bold(true),
		Title:     st().Foreground(p.accent).Bold(true),
		Tab:       st().Foreground(p.muted),
		TabActive: st().Foreground(p.accent).Background(p.accentBg).Bold(true),
		Cursor:    st().Background(p.accentBg).Bold(true),
		Bar:       st().Foreground(p.accent),
		BarEmpty:  st().Foreground(p.muted).Faint(true),
		Good:      st().Foreground(p.good),
		Warn:      st().Foreground(p.warn).Bold(true),
		Bad:       st().Foreground(p.bad).Bold(true),
		Badge: map[string]lipgloss.Style{
			"live":      badge(p.good),
			"reading":   badge(p.accent),
			"replaying": badge(p.accent),
			"waiting":   badge(p.warn),
			"done":      badge(p.muted),
			"failed":    badge(p.bad),
			"paused":    badge(p.warn).Reverse(true),
		},
		Kind: map[string]lipgloss.Style{
			"constant":    st().Foreground(p.muted),
			"identifier":  st().Foreground(p.muted).Italic(true),
			"derived":     st().Foreground(p.split[2]),
			"informative": st().Foreground(p.fg),
		},
		Diagonal: st().Foreground(p.muted).Faint(true),
		Spark:    st().Foreground(p.accent),
		HelpKey:  st().Foreground(p.accent).Bold(true),
		HelpDesc: st().Foreground(p.muted),
	}
	for i, c := range p.heat {
		s.Heat[i] = st().Foreground(c)
	}
	for i, c := range p.split {
		s.Split[i] = st().Foreground(c)
	}
	return s
}
