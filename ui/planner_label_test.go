package ui

import (
	"regexp"
	"strings"
	"testing"

	"github.com/charmbracelet/x/ansi"
)

// TestPlanMeasuredSavingVisible: at 80 and 120 columns the measured line
// says the per-day figure is a saving after zstd, and the whole saving
// (both percentages and the per-day figure) is on screen, not cut.
func TestPlanMeasuredSavingVisible(t *testing.T) {
	whole := regexp.MustCompile(`saves .*\d%.*\d%.*, [\d.]+ [kMGT]?B/day after zstd$`)
	for _, w := range []int{80, 120} {
		m, feed := fixtureModel(t, w, 24)
		feed.sample = fixtureSample()
		m = press(t, m, "5")
		var line string
		for _, l := range strings.Split(ansi.Strip(m.View()), "\n") {
			if strings.HasPrefix(l, "measured") {
				line = strings.TrimRight(l, " ")
			}
		}
		if line == "" || strings.Contains(line, "…") || !whole.MatchString(line) {
			t.Errorf("at %d columns the measured saving is cut or unlabelled: %q", w, line)
		}
	}
}
