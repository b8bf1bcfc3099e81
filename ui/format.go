package ui

import (
	"math"
	"strconv"
	"strings"
	"time"

	"github.com/charmbracelet/x/ansi"

	"bitsift/model"
)

// count writes n with thousands separators: 71,234.
func count(n int64) string {
	s := strconv.FormatInt(n, 10)
	neg := strings.HasPrefix(s, "-")
	if neg {
		s = s[1:]
	}
	var b strings.Builder
	for i, c := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	if neg {
		return "-" + b.String()
	}
	return b.String()
}

// bits writes an amount of information with two decimals: 2.71.
func bits(h float64) string { return strconv.FormatFloat(h, 'f', 2, 64) }

// rate writes a per-second figure: 2,001 or 15.3k.
func rate(r float64) string {
	switch {
	case r < 0:
		r = 0
	case r >= 100_000:
		return strconv.FormatFloat(r/1000, 'f', 0, 64) + "k"
	}
	return count(int64(math.Round(r)))
}

// byteSize writes a size in bytes with a binary-free unit: 12.3 MB.
func byteSize(n int64) string {
	const unit = 1000
	if n < unit {
		return strconv.FormatInt(n, 10) + " B"
	}
	f, u := float64(n), 0
	for f >= unit && u < 4 {
		f /= unit
		u++
	}
	return strconv.FormatFloat(f, 'f', 1, 64) + " " + "BkMGT"[u:u+1] + "B"
}

// span writes a duration for people: 35s, 4m10s, 2h05m.
func span(d time.Duration) string {
	d = d.Round(time.Second)
	switch {
	case d < time.Minute:
		return strconv.Itoa(int(d.Seconds())) + "s"
	case d < time.Hour:
		return strconv.Itoa(int(d.Minutes())) + "m" + pad2(int(d.Seconds())%60) + "s"
	}
	return strconv.Itoa(int(d.Hours())) + "h" + pad2(int(d.Minutes())%60) + "m"
}

func pad2(n int) string {
	if n < 10 {
		return "0" + strconv.Itoa(n)
	}
	return strconv.Itoa(n)
}

// percent writes a share 0..1 as 29.9%.
func percent(p float64) string { return strconv.FormatFloat(100*p, 'f', 1, 64) + "%" }

// windowName is a window as the screen names it: all, 10k, 5m.
func windowName(w model.Window) string {
	switch w.Kind {
	case model.WindowRecords:
		if w.Records%1000 == 0 {
			return strconv.Itoa(w.Records/1000) + "k"
		}
		return count(int64(w.Records))
	case model.WindowDuration:
		return strings.TrimSuffix(strings.TrimSuffix(w.Duration.String(), "0s"), "0m")
	}
	return "all"
}

// eighths are the left-aligned partial blocks, 1/8 to 8/8 of a cell.
var eighths = []rune("▏▎▍▌▋▊▉█")

// barCells draws a fraction 0..1 of w cells: full blocks, one partial
// block, then the empty rest (returned apart, for its own style).
func barCells(frac float64, w int) (full, empty string) {
	if w <= 0 {
		return "", ""
	}
	frac = math.Max(0, math.Min(1, frac))
	e := int(math.Round(frac * float64(w) * 8))
	var b strings.Builder
	for range e / 8 {
		b.WriteRune('█')
	}
	cells := e / 8
	if r := e % 8; r > 0 {
		b.WriteRune(eighths[r-1])
		cells++
	}
	return b.String(), strings.Repeat("░", w-cells)
}

// sparks are the eight heights of a sparkline.
var sparks = []rune("▁▂▃▄▅▆▇█")

// sparkline draws the last w values of vs, scaled so that differences
// below minSpan do not show as a climb: a steady field draws flat.
func sparkline(vs []float64, w int, minSpan float64) string {
	if w <= 0 {
		return ""
	}
	if len(vs) > w {
		vs = vs[len(vs)-w:]
	}
	if len(vs) == 0 {
		return strings.Repeat(" ", w)
	}
	lo, hi := vs[0], vs[0]
	for _, v := range vs {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if hi-lo < minSpan {
		mid := (hi + lo) / 2
		lo, hi = mid-minSpan/2, mid+minSpan/2
	}
	var b strings.Builder
	b.Grow(3 * w)
	for range w - len(vs) {
		b.WriteByte(' ')
	}
	for _, v := range vs {
		i := int((v - lo) / (hi - lo) * float64(len(sparks)-1))
		b.WriteRune(sparks[max(0, min(len(sparks)-1, i))])
	}
	return b.String()
}

// padRight fits an already safe (sanitised or own) string to w cells.
func padRight(s string, w int) string {
	n := ansi.StringWidth(s)
	if n > w {
		return ansi.Truncate(s, w, "…")
	}
	return s + strings.Repeat(" ", w-n)
}

// padLeft right-aligns an already safe string in w cells.
func padLeft(s string, w int) string {
	n := ansi.StringWidth(s)
	if n > w {
		return ansi.Truncate(s, w, "…")
	}
	return strings.Repeat(" ", w-n) + s
}

// joinFit joins parts with sep, leaving out the last parts that do not fit
// in w cells.
func joinFit(parts []string, sep string, w int) string {
	out, used := "", 0
	for i, p := range parts {
		if p == "" {
			continue
		}
		pw := ansi.StringWidth(p)
		if i > 0 && out != "" {
			pw += ansi.StringWidth(sep)
		}
		if used+pw > w {
			break
		}
		if out != "" {
			out += sep
		}
		out += p
		used += pw
	}
	return out
}

func formatFloat(x float64, d int) string { return strconv.FormatFloat(x, 'f', d, 64) }

// ansiStrip removes styling, to restyle a cell.
func ansiStrip(s string) string { return ansi.Strip(s) }

// ansiFit cuts an already safe string to w cells.
func ansiFit(s string, w int) string {
	if w <= 0 {
		return ""
	}
	return ansi.Truncate(s, w, "…")
}
