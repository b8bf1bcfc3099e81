package ui

import (
	"context"
	"sort"
	"strings"
	"time"

	"github.com/charmbracelet/bubbles/viewport"
	tea "github.com/charmbracelet/bubbletea"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/sanitize"
)

// linesLimit is how many records a drill-down shows: the newest.
const linesLimit = 500

// linesView shows the lines behind a finding: the newest window records
// meeting its conditions, each with its file, line and time and its raw
// text made safe for the terminal (under --redact, where no raw line is
// kept, the redacted record), in a viewport that pages.
type linesView struct {
	env   *env
	w, h  int
	vp    viewport.Model
	title string
	conds []model.Cond
	// answer
	done  bool
	lines []ingest.LineBehind
	total int
	err   error
}

// openLinesMsg asks the root to show the lines behind a finding.
type openLinesMsg struct {
	title string
	conds []model.Cond
}

// linesMsg carries the records found.
type linesMsg struct {
	lines []ingest.LineBehind
	total int
	err   error
}

func openLines(title string, conds []model.Cond) tea.Cmd {
	return func() tea.Msg { return openLinesMsg{title, conds} }
}

// fetchLines asks the feed for the records, off the UI goroutine.
func fetchLines(ctx context.Context, feed Feed, conds []model.Cond) tea.Cmd {
	return func() tea.Msg {
		ctx, cancel := context.WithTimeout(ctx, 10*time.Second)
		defer cancel()
		l, n, err := feed.Lines(ctx, conds, linesLimit)
		return linesMsg{l, n, err}
	}
}

func newLinesView(e *env, title string, conds []model.Cond, w, h int) linesView {
	v := linesView{env: e, title: title, conds: conds, vp: viewport.New(w, max(1, h-2))}
	return v.setSize(w, h)
}

func (v linesView) setSize(w, h int) linesView {
	v.w, v.h = w, h
	v.vp.Width, v.vp.Height = w, max(1, h-2)
	return v.refresh()
}

func (v linesView) answer(msg linesMsg) linesView {
	v.done, v.lines, v.total, v.err = true, msg.lines, msg.total, msg.err
	return v.refresh()
}

// Update pages through the lines.
func (v linesView) Update(msg tea.Msg) (linesView, tea.Cmd) {
	if s, ok := scrollOf(v.env.keys, msg, v.vp.Height); ok {
		scrollViewport(&v.vp, s)
	}
	return v, nil
}

// View draws exactly h lines: a title, what was found, the page.
func (v linesView) View() string {
	st := v.env.st
	head := st.Title.Render("LINES BEHIND") + "  " + sanitize.String(v.title)
	var sub string
	switch {
	case !v.done:
		sub = "looking in the window…"
	case v.err != nil:
		sub = "cannot look: " + sanitize.String(v.err.Error())
	default:
		sub = count(int64(v.total)) + " records in the window · newest first"
		if v.total == 1 {
			sub = "1 record in the window"
		}
		if v.total > len(v.lines) {
			sub += " · showing the newest " + count(int64(len(v.lines)))
		}
		sub += " · esc back"
	}
	out := []string{ansiFit(head, v.w), ansiFit(st.Muted.Render(sub), v.w)}
	out = append(out, strings.Split(v.vp.View(), "\n")...)
	return fill(out, v.h)
}

func (v linesView) refresh() linesView {
	if !v.done || v.err != nil {
		v.vp.SetContent("")
		return v
	}
	st := v.env.st
	var rows []string
	for _, l := range v.lines {
		where := "line " + count(l.Line)
		if l.Source != "" {
			where = sanitize.String(l.Source) + ":" + itoa(l.Line)
		}
		at := ""
		if l.Time != 0 {
			at = time.Unix(0, l.Time).UTC().Format("15:04:05.000")
		}
		rows = append(rows, ansiFit(st.Title.Render(where)+"  "+st.Muted.Render(at), v.w))
		text := ""
		if l.Raw != nil {
			text = sanitize.String(string(l.Raw))
		} else {
			text = st.Muted.Render("(no raw line kept: ") + valuesText(l.Values) + st.Muted.Render(")")
		}
		rows = append(rows, wrapText(text, v.w-2, 3)...)
	}
	if len(rows) == 0 {
		rows = []string{st.Muted.Render("  no record of the window meets it now")}
	}
	y := v.vp.YOffset
	v.vp.SetContent(strings.Join(rows, "\n"))
	v.vp.SetYOffset(y)
	return v
}

// valuesText is a record's values, field=value by field name, made safe.
func valuesText(m map[string]string) string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	parts := make([]string, len(keys))
	for i, k := range keys {
		parts[i] = sanitize.String(k) + "=" + sanitize.String(m[k])
	}
	return strings.Join(parts, " ")
}

// wrapText cuts s (made safe already, maybe styled) into at most n lines
// of w cells, each indented by two, the last cut with an ellipsis.
func wrapText(s string, w, n int) []string {
	w = max(10, w)
	plain := []rune(ansiStrip(s))
	var out []string
	for len(plain) > 0 && len(out) < n {
		k := min(len(plain), w)
		out = append(out, ansiFit("  "+string(plain[:k]), w+2))
		plain = plain[k:]
	}
	if len(plain) > 0 && len(out) > 0 {
		last := []rune(out[len(out)-1])
		out[len(out)-1] = string(last[:len(last)-1]) + "…"
	}
	return out
}

func itoa(n int64) string { return strings.ReplaceAll(count(n), ",", "") }
