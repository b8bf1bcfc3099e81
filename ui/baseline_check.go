package ui

import (
	"bitsift/ingest"
	"bitsift/model"
)

// checkBaseline refuses --baseline once the first records show it is of
// another stream: the screen goes back to the rolling baseline and says
// why (a baseline sharing few fields flags every field as shifted).
func (m Model) checkBaseline(f *ingest.Frame) Model {
	if m.opt.Baseline == nil || m.e.baselineChecked || f.Snap.Records < minBaselineCheck {
		return m
	}
	m.e.baselineChecked = true
	if err := model.CheckBaseline(m.opt.Baseline, f.Snap); err != nil {
		m.feed.SetBaseline(ingest.Rolling)
		m.say("refused: " + err.Error())
	}
	return m
}

// minBaselineCheck is how many records the check waits for: the first
// few may lack fields that come later.
const minBaselineCheck = 200
