package ui

// timeline lists the findings kept after they left the window (see
// timelineBook): none yet in this version of the page.
func (v driftView) timeline() ([]string, []driftItem) { return nil, nil }
