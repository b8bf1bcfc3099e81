package parse

import (
	"regexp"
	"strings"
	"time"
)

// Timestamps at the head of unstructured lines, in the forms services write
// (forms as commonly seen in JVM, Android, syslog, Apache, RAS and glog logs; the
// list is common practice, no single published source). Each form is an
// anchored expression for finding it at the start of a header, and Go
// layouts for reading it. Forms without a year take it from the reference
// time as syslog stamps do.
type headTime struct {
	name    string
	re      *regexp.Regexp
	layouts []string
	noYear  bool
	// fixColon: the last ':' before the fraction stands for '.'
	// ("2:11:09:417").
	fixColon bool
}

var headTimes = []*headTime{
	{name: "iso", re: regexp.MustCompile(`^\d{4}-\d\d-\d\d[T ]\d\d:\d\d:\d\d(?:[.,]\d{1,9})?(?:Z|[+-]\d\d:?\d\d)?`),
		layouts: isoLayouts},
	{name: "ymd-hms-dotted", re: regexp.MustCompile(`^\d{4}-\d\d-\d\d-\d\d\.\d\d\.\d\d(?:\.\d{1,9})?`),
		layouts: []string{"2006-01-02-15.04.05"}},
	{name: "ymd-slash", re: regexp.MustCompile(`^\d{4}/\d\d/\d\d \d\d:\d\d:\d\d(?:[.,]\d{1,9})?`),
		layouts: []string{"2006/01/02 15:04:05"}},
	{name: "yymmdd", re: regexp.MustCompile(`^\d\d[01]\d[0-3]\d [0-2]\d[0-5]\d[0-5]\d\b`),
		layouts: []string{"060102 150405"}},
	{name: "yy/mm/dd", re: regexp.MustCompile(`^\d\d/[01]\d/[0-3]\d \d\d:\d\d:\d\d(?:[.,]\d{1,9})?`),
		layouts: []string{"06/01/02 15:04:05"}},
	{name: "mm-dd", re: regexp.MustCompile(`^[01]\d-[0-3]\d \d\d:\d\d:\d\d(?:[.,]\d{1,9})?`),
		layouts: []string{"01-02 15:04:05"}, noYear: true},
	{name: "mm.dd", re: regexp.MustCompile(`^[01]\d\.[0-3]\d \d\d:\d\d:\d\d(?:[.,]\d{1,9})?`),
		layouts: []string{"01.02 15:04:05"}, noYear: true},
	{name: "ctime", re: regexp.MustCompile(`^(?:Mon|Tue|Wed|Thu|Fri|Sat|Sun) (?:Jan|Feb|Mar|Apr|May|Jun|Jul|Aug|Sep|Oct|Nov|Dec) [ 0-3]\d \d\d:\d\d:\d\d(?:\.\d{1,9})? \d{4}`),
		layouts: []string{"Mon Jan _2 15:04:05 2006"}},
	{name: "mmm-d-year", re: regexp.MustCompile(`^(?:Jan|Feb|Mar|Apr|May|Jun|Jul|Aug|Sep|Oct|Nov|Dec) [ 0-3]?\d \d\d:\d\d:\d\d(?:\.\d{1,9})? \d{4}\b`),
		layouts: []string{"Jan _2 15:04:05 2006", "Jan 2 15:04:05 2006"}},
	{name: "mmm-d", re: regexp.MustCompile(`^(?:Jan|Feb|Mar|Apr|May|Jun|Jul|Aug|Sep|Oct|Nov|Dec) [ 0-3]?\d \d\d:\d\d:\d\d(?:\.\d{1,9})?`),
		layouts: []string{"Jan _2 15:04:05", "Jan 2 15:04:05"}, noYear: true},
	{name: "ymd-compact", re: regexp.MustCompile(`^\d{4}[01]\d[0-3]\d-[0-2]?\d:\d\d:\d\d(?::\d{1,3})?`),
		layouts: []string{"20060102-15:04:05"}, fixColon: true},
	{name: "ymd-date", re: regexp.MustCompile(`^\d{4}\.[01]\d\.[0-3]\d\b`),
		layouts: []string{"2006.01.02"}},
	// glog and klog's "mmdd hh:mm:ss.uuuuuu" (the klog format's time).
	{name: "mmdd", re: regexp.MustCompile(`^[01]\d[0-3]\d \d\d:\d\d:\d\d(?:\.\d{1,9})?`),
		layouts: []string{"0102 15:04:05"}, noYear: true},
}

// matchHeadTime finds a timestamp at the start of b (optionally in square
// brackets); it returns the form, the timestamp's text (without brackets or
// a trailing comma) and the bytes it takes up.
func matchHeadTime(b []byte) (form int, ts []byte, n int, ok bool) {
	return matchHeadTimeOf(b, headTimes, 0)
}

// matchHeadTimeOf tries the forms hs, the first of which is form base.
func matchHeadTimeOf(b []byte, hs []*headTime, base int) (form int, ts []byte, n int, ok bool) {
	in := b
	bracket := len(b) > 0 && b[0] == '['
	if bracket {
		in = b[1:]
	}
	if len(in) == 0 || !isDigit(in[0]) && (in[0] < 'A' || in[0] > 'Z') {
		return 0, nil, 0, false // every form starts with a digit or a capital
	}
	for j, h := range hs {
		i := base + j
		m := h.re.Find(in)
		if m == nil {
			continue
		}
		n = len(m)
		if bracket {
			if n >= len(in) || in[n] != ']' {
				continue
			}
			return i, m, n + 2, true
		}
		if n < len(b) && b[n] == ',' {
			n++ // "2026-03-14 02:11:09, Info": the comma is not the time's
		}
		return i, m, n, true
	}
	return 0, nil, 0, false
}

// parseHeadTime reads s in any of the forms above.
func parseHeadTime(s string, ref time.Time) (int64, bool) {
	t, _, ok := parseHeadTimeFrom(s, ref, -1)
	return t, ok
}

// parseHeadTimeFrom is parseHeadTime trying form first (when ≥ 0) before
// the others; it returns the form that read s. A stream's times keep one
// form, and trying a dozen expressions on each was most of the cost of
// reading a header log (TimeFinder keeps the last form).
func parseHeadTimeFrom(s string, ref time.Time, first int) (int64, int, bool) {
	s = strings.TrimSuffix(strings.TrimSuffix(strings.TrimPrefix(s, "["), ","), "]")
	if first >= 0 {
		if t, ok := headTimes[first].read(s, ref); ok {
			return t, first, true
		}
	}
	for i, h := range headTimes {
		if i == first {
			continue
		}
		if t, ok := h.read(s, ref); ok {
			return t, i, true
		}
	}
	return 0, -1, false
}

// read reads s in form h.
func (h *headTime) read(s string, ref time.Time) (int64, bool) {
	m := h.re.FindString(s)
	if m == "" || len(m) != len(s) {
		return 0, false
	}
	if h.fixColon && strings.Count(s, ":") == 3 {
		k := strings.LastIndexByte(s, ':')
		s = s[:k] + "." + s[k+1:]
	}
	for _, l := range h.layouts {
		t, err := time.Parse(l, s)
		if err != nil {
			continue
		}
		if h.noYear {
			t = withYear(t, ref)
		}
		return t.UnixNano(), true
	}
	return 0, false
}

// withYear gives a stamp without a year the year of ref, or the year
// before when that puts it more than 31 days after ref (as parseSyslog).
func withYear(t, ref time.Time) time.Time {
	y := ref.Year()
	at := time.Date(y, t.Month(), t.Day(), t.Hour(), t.Minute(), t.Second(), t.Nanosecond(), time.UTC)
	if at.After(ref.Add(31 * 24 * time.Hour)) {
		at = time.Date(y-1, t.Month(), t.Day(), t.Hour(), t.Minute(), t.Second(), t.Nanosecond(), time.UTC)
	}
	return at
}
