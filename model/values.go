package model

import "strconv"

// replayValue returns a text for value id of f, for replaying the window's
// records into another model (Rebuild, WithWindow): the value's own text, or
// for a hashed identifier, whose text is not kept, a stand-in that is equal
// iff the ids are equal, as long as the value was where it could be.
func (f *field) replayValue(id uint32) string {
	if !f.hashed() {
		return f.text[id]
	}
	s := "#" + strconv.Itoa(int(id))
	if n := int(f.ids.length(id)); n > len(s) {
		s += dots(n - len(s))
	}
	return s
}

func dots(n int) string {
	b := make([]byte, n)
	for i := range b {
		b[i] = '.'
	}
	return string(b)
}

// display returns the text of value id of f for a screen or report; a
// hashed identifier's values are not kept, and show as their id.
func (f *field) display(id uint32) string {
	if !f.hashed() {
		return f.text[id]
	}
	return "#" + strconv.Itoa(int(id)) + " (value not kept)"
}
