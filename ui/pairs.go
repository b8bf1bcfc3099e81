package ui

import (
	"math"
	"sort"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"

	"bitsift/model"
	"bitsift/sanitize"
)

// Sizes of the Pairs screen.
const (
	maxPairFields = 20
	pairLabel     = 14 // letter, space, name
	pairPanelMin  = 34
	legendLines   = 4
)

// heatLevels are the upper bounds of H(row|col)/H(row) for each glyph;
// past the last, the column tells little about the row.
var heatLevels = []float64{0.05, 0.25, 0.5, 0.8}

var heatGlyphs = []string{"██", "▓▓", "▒▒", "░░", "··"}

// pairsView is the Pairs screen: a heat map of H(row|col)/H(row) over the
// most informative fields, and the figures of the cell under the cursor.
type pairsView struct {
	env        *env
	w, h       int
	n          int   // the most fields the size allows
	idx        []int // the fields shown, indices into the snapshot
	r, c       int
	selR, selC string
	// moved: the user has moved the cursor; until then it stays on the
	// first cell off the diagonal as the order settles.
	moved bool
	// label is the width of the row labels (letter, space, name): wider
	// on a wide screen, so that names are not cut.
	label int
	// raw shades by H(row|col)/H(row); by default cells are shaded by
	// 1 − RFI, the share of the row not reliably explained once chance
	// agreement is taken off (a many-valued column explains a lot by
	// chance alone: raw, H(account | latency_ms) looks predictive).
	raw bool
	// pick is the value pair under the breakdown's cursor ([ ]); enter
	// opens the lines behind it.
	pick int
}

// newPairsView starts with the cursor off the diagonal.
func newPairsView(e *env) pairsView { return pairsView{env: e, c: 1} }

func (v pairsView) setSize(w, h int) pairsView {
	v.w, v.h = w, h
	v.n = max(2, min(maxPairFields, (w-2-pairLabel-2-pairPanelMin)/2, h-2-legendLines))
	v.label = max(pairLabel, min(34, w-2-2*v.n-2-pairPanelMin-10))
	return v.refresh()
}

// refresh picks the fields to show: tracked, not constant, with pairs,
// most entropy first.
func (v pairsView) refresh() pairsView {
	f := v.env.frame
	if f == nil {
		return v
	}
	s := f.Snap
	v.idx = v.idx[:0]
	for i := range s.Fields {
		fs := &s.Fields[i]
		if !fs.Tracked || fs.Kind == model.Constant || fs.Entropy <= 0 {
			continue
		}
		for j := range s.Fields {
			if s.HasPair(i, j) {
				v.idx = append(v.idx, i)
				break
			}
		}
	}
	sort.SliceStable(v.idx, func(a, b int) bool {
		fa, fb := &s.Fields[v.idx[a]], &s.Fields[v.idx[b]]
		if fa.Entropy != fb.Entropy {
			return fa.Entropy > fb.Entropy
		}
		return fa.Name < fb.Name
	})
	if len(v.idx) > v.n {
		v.idx = v.idx[:v.n]
	}
	if !v.moved {
		v.r, v.c, v.selR, v.selC = 0, 1, "", ""
	}
	for i, fi := range v.idx {
		if s.Fields[fi].Name == v.selR {
			v.r = i
		}
		if s.Fields[fi].Name == v.selC {
			v.c = i
		}
	}
	return v.clamp()
}

func (v pairsView) clamp() pairsView {
	n := len(v.idx)
	v.r, v.c = max(0, min(v.r, n-1)), max(0, min(v.c, n-1))
	if f := v.env.frame; f != nil && n > 0 {
		v.selR, v.selC = f.Snap.Fields[v.idx[v.r]].Name, f.Snap.Fields[v.idx[v.c]].Name
	}
	return v
}

// Update handles keys and the mouse wheel.
func (v pairsView) Update(msg tea.Msg) (pairsView, tea.Cmd) {
	k := v.env.keys
	if s, ok := scrollOf(k, msg, len(v.idx)); ok {
		v.moved, v.pick = true, 0
		v.r = s.apply(v.r, len(v.idx))
		return v.clamp(), nil
	}
	km, ok := msg.(tea.KeyMsg)
	if !ok {
		return v, nil
	}
	switch {
	case key.Matches(km, k.Left):
		v.c--
		v.moved, v.pick = true, 0
	case key.Matches(km, k.Right):
		v.c++
		v.moved, v.pick = true, 0
	case key.Matches(km, k.NextGiven):
		v.pick++
		if f := v.env.frame; f != nil {
			v.pick = min(v.pick, max(0, len(v.cellPairs(f.Snap))-1))
		}
	case key.Matches(km, k.PrevGiven):
		v.pick = max(0, v.pick-1)
	case key.Matches(km, k.Open):
		if f := v.env.frame; f != nil {
			if title, conds, ok := v.pickedConds(f.Snap); ok {
				return v, openLines(title, conds)
			}
		}
	case key.Matches(km, k.Shade):
		v.raw = !v.raw
	}
	return v.clamp(), nil
}

func letter(i int) string { return string(rune('a' + i)) }

// heat is the glyph level of a share of the row left: 0 (the column
// determines the row) to 4 (it tells little).
func heat(share float64) int {
	for i, b := range heatLevels {
		if share < b {
			return i
		}
	}
	return len(heatLevels)
}

// View draws exactly h lines of w cells.
func (v pairsView) View() string {
	st := v.env.st
	f := v.env.frame
	if f == nil || len(v.idx) < 2 {
		msg := "  waiting for fields with pairs…"
		if f != nil {
			msg = "  fewer than two fields carry pairs in this window"
		}
		return fill([]string{st.Muted.Render(msg)}, v.h)
	}
	s := f.Snap
	n := len(v.idx)
	var left []string
	var hdr strings.Builder
	hdr.WriteString(strings.Repeat(" ", 2+v.label))
	for j := range n {
		l := letter(j) + " "
		if j == v.c {
			hdr.WriteString(st.TabActive.Render(l))
		} else {
			hdr.WriteString(st.Header.Render(l))
		}
	}
	left = append(left, hdr.String())
	for i, fi := range v.idx {
		var b strings.Builder
		mark := "  "
		if i == v.r {
			mark = "▸ "
		}
		label := letter(i) + " " + sanitize.Pad(s.Fields[fi].Name, v.label-3) + " "
		if i == v.r {
			label = st.TabActive.Render(label)
		}
		b.WriteString(mark + label)
		for j, fj := range v.idx {
			var cell string
			switch {
			case i == j:
				cell = st.Diagonal.Render("╲╲")
			case !s.HasPair(fi, fj):
				cell = st.Diagonal.Render("  ")
			default:
				lv := heat(v.share(s, fi, fj))
				cell = st.Heat[lv].Render(heatGlyphs[lv])
			}
			if i == v.r && j == v.c {
				cell = st.Cursor.Render(ansiStrip(cell))
			}
			b.WriteString(cell)
		}
		left = append(left, b.String())
	}
	pointer := strings.Repeat(" ", 2+v.label+2*v.c) + "▲"
	left = append(left, st.Muted.Render(pointer))
	left = append(left, v.legend()...)
	right := v.panel(s)
	mapW := 2 + v.label + 2*n + 2
	lines := make([]string, v.h)
	for i := range lines {
		l, r := "", ""
		if i < len(left) {
			l = left[i]
		}
		if i < len(right) {
			r = right[i]
		}
		lines[i] = padRight(l, mapW) + r
	}
	return strings.Join(lines, "\n")
}

func (v pairsView) legend() []string {
	st := v.env.st
	g := func(i int) string { return st.Heat[i].Render(heatGlyphs[i]) }
	what := "cell: 1 − RFI(row|col), v: raw"
	if v.raw {
		what = "cell: H(row|col)/H(row), v: RFI"
	}
	return []string{
		st.Muted.Render(what),
		st.Muted.Render("0: col fixes row  1: no help"),
		g(0) + "<.05 " + g(1) + "<.25 " + g(2) + "<.5",
		g(3) + "<.8  " + g(4) + "≥.8  " + st.Diagonal.Render("╲╲") + "self",
	}
}

// panel is the figures of the cell under the cursor.
func (v pairsView) panel(s *model.Snapshot) []string {
	st := v.env.st
	pw := v.w - (2 + v.label + 2*len(v.idx) + 2)
	ri, ci := v.idx[v.r], v.idx[v.c]
	rn, cn := s.Fields[ri].Name, s.Fields[ci].Name
	out := []string{
		st.Header.Render("ROW ") + letter(v.r) + " " + sanitize.Fit(rn, pw-6),
		st.Header.Render("COL ") + letter(v.c) + " " + sanitize.Fit(cn, pw-6),
	}
	if ri == ci {
		return append(out, "", st.Muted.Render("a field against itself:"), st.Muted.Render("move left or right"))
	}
	if !s.HasPair(ri, ci) {
		return append(out, "", st.Muted.Render("this pair is not measured"))
	}
	hr, hc, hj := s.Fields[ri].Entropy, s.Fields[ci].Entropy, s.Joint(ri, ci)
	hrc, hcr, mi := s.Cond(ri, ci), s.Cond(ci, ri), s.Mutual(ri, ci)
	line := func(name string, x float64, st2 func(...string) string) string {
		return padRight(name, 12) + st2(padLeft(bits(x), 6)) + " bits"
	}
	plain := st.Text.Render
	out = append(out,
		line("H(row)", hr, plain),
		line("H(col)", hc, plain),
		line("H(row,col)", hj, plain),
		line("H(row|col)", hrc, st.Split[0].Render),
		line("I(row;col)", mi, st.Split[1].Render),
		line("H(col|row)", hcr, st.Split[2].Render),
	)
	share := 0.0
	if hr > 0 {
		share = hrc / hr
	}
	out = append(out, padRight("row left", 12)+padLeft(percent(share), 6)+" of H(row)")
	rfi := s.RFI(ri, ci)
	out = append(out, padRight("RFI", 12)+padLeft(formatFloat(rfi, 3), 6)+st.Muted.Render(" reliably explained"), "")
	out = append(out, v.breakdown(s, pw)...)
	out = append(out, "")
	bw := max(8, min(pw-1, 48))
	a, b := 0, 0
	if hj > 0 {
		a = int(hrc/hj*float64(bw) + 0.5)
		b = int(mi/hj*float64(bw) + 0.5)
		b = min(b, bw-a)
	}
	c := bw - a - b
	if hj <= 0 {
		a, b, c = 0, 0, bw
	}
	out = append(out,
		st.Muted.Render("H(row,col) = "+bits(hj)+" bits:"),
		st.Split[0].Render(strings.Repeat("█", a))+st.Split[1].Render(strings.Repeat("▓", b))+st.Split[2].Render(strings.Repeat("░", c)),
		st.Split[0].Render("█")+" row|col "+st.Split[1].Render("▓")+" I "+st.Split[2].Render("░")+" col|row",
		"",
		st.Muted.Render(ansiFit("3: "+sanitize.String(rn)+" given "+sanitize.String(cn)+" up close", pw-1)),
	)
	return out
}

// fill pads lines to exactly h.
func fill(lines []string, h int) string {
	for len(lines) < h {
		lines = append(lines, "")
	}
	return strings.Join(lines[:h], "\n")
}

// share is what a cell shades: by default 1 − RFI(row|col) clipped to
// [0, 1] (chance-corrected), with raw H(row|col)/H(row).
func (v pairsView) share(s *model.Snapshot, i, j int) float64 {
	hr := s.Fields[i].Entropy
	if hr <= 0 {
		return 0
	}
	if v.raw {
		return s.Cond(i, j) / hr
	}
	r := s.RFI(i, j)
	if math.IsNaN(r) {
		return 1
	}
	return max(0, min(1, 1-r))
}
