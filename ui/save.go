package ui

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"strings"
	"time"

	tea "github.com/charmbracelet/bubbletea"

	"bitsift/model"
	"bitsift/report"
)

// savedMsg says what a save did, for the status line.
type savedMsg struct{ text string }

// saveBaseline writes the window's profile to bitsift-baseline-TIME.json
// in the working folder, off the screen's goroutine.
func (m Model) saveBaseline() tea.Cmd {
	path := "bitsift-baseline-" + m.e.now().UTC().Format("20060102T150405") + ".json"
	feed, ctx := m.feed, m.opt.Context
	return func() tea.Msg {
		ctx, cancel := context.WithTimeout(ctx, 30*time.Second)
		defer cancel()
		if err := feed.SaveBaseline(ctx, path); err != nil {
			return savedMsg{"baseline not written: " + err.Error()}
		}
		return savedMsg{"window written to " + path + ": give it to --baseline"}
	}
}

// SaveBaseline writes the window's profile as a JSON report, on the owner
// goroutine (a snapshot with the profile: about a frame's cost).
func (f *LiveFeed) SaveBaseline(ctx context.Context, path string) error {
	var rep *report.Report
	if err := f.Visit(ctx, func() {
		rep = report.Build(f.in.Snapshot(model.SnapshotOptions{Profile: true}))
	}); err != nil {
		return err
	}
	return writeFile(path, func(b *strings.Builder) error { return report.WriteJSON(b, rep) })
}

// writeFile writes what fill makes to path, refusing to replace a file.
func writeFile(path string, fill func(*strings.Builder) error) error {
	var b strings.Builder
	if err := fill(&b); err != nil {
		return err
	}
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		return err
	}
	if _, err := f.WriteString(b.String()); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// screenFile is what the write key saves as JSON: the screen's text as
// shown (made safe already, without colour) and the frame's report.
type screenFile struct {
	Schema string         `json:"schema"`
	Screen string         `json:"screen"`
	Taken  string         `json:"taken"`
	Width  int            `json:"width"`
	Lines  []string       `json:"lines"`
	Report *report.Report `json:"report,omitempty"`
}

// writeScreen writes the screen on show to bitsift-screen-TIME.md and
// .json in the working folder, and says where.
func (m Model) writeScreen() string {
	name := screenNames[m.screen]
	if m.showLines {
		name = "Lines"
	}
	lines := strings.Split(ansiStrip(m.View()), "\n")
	for i := range lines {
		lines[i] = strings.TrimRight(lines[i], " ")
	}
	stem := "bitsift-screen-" + m.e.now().UTC().Format("20060102T150405")
	var rep *report.Report
	if f := m.e.frame; f != nil {
		rep = report.Build(f.Snap)
		rep.AddTimeline(m.e.timeline.Entries(), "seen on the screen, frame by frame")
	}
	sf := screenFile{Schema: "bitsift.screen/1", Screen: name, Taken: m.e.now().UTC().Format(time.RFC3339), Width: m.w, Lines: lines, Report: rep}
	err := writeFile(stem+".json", func(b *strings.Builder) error {
		enc := json.NewEncoder(b)
		enc.SetIndent("", " ")
		return enc.Encode(sf)
	})
	if err == nil {
		err = writeFile(stem+".md", func(b *strings.Builder) error {
			fmt.Fprintf(b, "# bitsift: the %s screen at %s\n\n```\n%s\n```\n", name, sf.Taken, strings.Join(lines, "\n"))
			if rep != nil {
				b.WriteString("\n")
				return report.WriteMarkdown(b, rep)
			}
			return nil
		})
	}
	if err != nil {
		return "screen not written: " + err.Error()
	}
	return "screen written to " + stem + ".md and .json"
}
