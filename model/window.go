package model

import (
	"errors"
	"fmt"
	"strconv"
	"strings"
	"time"
)

// WindowKind says which records the figures cover.
type WindowKind int

const (
	// WindowAll covers every record since the start.
	WindowAll WindowKind = iota
	// WindowRecords covers the last Records records.
	WindowRecords
	// WindowDuration covers the records of the last Duration, by record
	// time (or arrival time where records carry none).
	WindowDuration
)

// String is the name used in reports: all, records or duration.
func (k WindowKind) String() string {
	switch k {
	case WindowRecords:
		return "records"
	case WindowDuration:
		return "duration"
	}
	return "all"
}

// Window says which records the model keeps figures for.
type Window struct {
	Kind     WindowKind
	Records  int
	Duration time.Duration
}

// String is the window as the --window flag spells it.
func (w Window) String() string {
	switch w.Kind {
	case WindowRecords:
		return strconv.Itoa(w.Records)
	case WindowDuration:
		return w.Duration.String()
	}
	return "all"
}

// ParseWindow reads a --window value: "all", a record count ("50000",
// "50k") or a duration ("5m", "1h30m"; "m" is always minutes).
func ParseWindow(s string) (Window, error) {
	s = strings.TrimSpace(strings.ToLower(s))
	if s == "" || s == "all" {
		return Window{Kind: WindowAll}, nil
	}
	mult, num := 1, s
	if strings.HasSuffix(s, "k") {
		mult, num = 1000, s[:len(s)-1]
	}
	if d, err := time.ParseDuration(s); err == nil {
		if d <= 0 {
			return Window{}, errors.New("window: a duration window must be positive")
		}
		return Window{Kind: WindowDuration, Duration: d}, nil
	}
	if n, err := strconv.Atoi(num); err == nil {
		if n <= 0 {
			return Window{}, errors.New("window: a record window must hold at least one record")
		}
		return Window{Kind: WindowRecords, Records: n * mult}, nil
	}
	return Window{}, fmt.Errorf("window: %q is neither \"all\", a record count (50000, 50k) nor a duration (5m)", s)
}
