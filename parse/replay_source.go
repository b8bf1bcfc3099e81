package parse

// learnLines is how many lines a source replayer reads, unpaced, before it
// detects the format it reads the records' times in.
const learnLines = 16

// NewSourceReplayer paces src (a Kafka topic read to its end, or any
// source that ends) as a Replayer paces files: by the records'
// timestamps, read with opt.Format, or with the format detected from the
// first learnLines lines (released unpaced). opt.KeepOrder means nothing
// here: src gives the order. Pause, Resume, Step and ETA work as for
// files; the status is src's, with the replay's state and note.
func NewSourceReplayer(src Source, opt ReplayOptions) (*Replayer, error) {
	r, err := NewReplayer(nil, opt)
	if err != nil {
		return nil, err
	}
	r.files = src
	r.learning = r.format == nil
	return r, nil
}

// learn keeps the first lines of a source replayer without a format and
// detects one from them.
func (r *Replayer) learn(line []byte) {
	if !r.learning {
		return
	}
	r.sample = append(r.sample, append([]byte(nil), line...))
	if len(r.sample) < learnLines {
		return
	}
	r.learning = false
	if d, err := Detect(r.sample); err == nil {
		r.format = d.Format
	}
	r.sample = nil
}
