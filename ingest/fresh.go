package ingest

import "bitsift/parse"

// Fresh returns an Ingester over an empty model that reads on as in does:
// the same configuration, with the format, the companion fields, the
// timestamp field and the redaction key in already chose (shared, not
// chosen again). A worker starts one per profile, so that every profile of
// a topic makes the same fields from the same values (profiles whose
// companions differ cannot be added) whatever lines each one begins with.
// Before in has chosen (fewer lines than the detection sample so far),
// Fresh is New with in's configuration.
//
// The two Ingesters share the companions' state and the format's scratch
// buffers: they must be used by one goroutine, as the worker does.
func (in *Ingester) Fresh() (*Ingester, error) {
	n, err := New(in.cfg)
	if err != nil || !in.started {
		return n, err
	}
	n.redact = in.redact
	f := in.format
	if _, ok := f.(parse.Joiner); ok {
		// A joiner holds a record across lines: one of its own.
		if g, err := parse.ByName(f.Name()); err == nil {
			f = g
		}
	}
	n.setFormat(f, in.conf)
	n.started = true
	n.comp = in.comp
	n.comp.Declare(n.model)
	n.times = in.times
	return n, nil
}

// Take takes one line from a source read by its owner (the Kafka worker
// routes each record to its partition's Ingester).
func (in *Ingester) Take(l parse.Line) { in.take(l) }
