package parse

// innerPrefix is put in front of an inner field's key when the key is
// already one of the outer fields (a JSON log line with its own "time"
// inside a container line that has one).
const innerPrefix = "log."

// inner reads the message carried inside another format (a container line,
// a prefixed line) again as JSON, klog or logfmt, when it is one of those.
type inner struct {
	json    JSON
	logfmt  Logfmt
	klog    *Klog // made on first use: a Klog holds an inner of its own
	scratch Record
}

// klogLine reads msg as a klog line into in.scratch, if it is one (a
// Kubernetes component's output inside a CRI or docker line, or behind
// kubectl logs --timestamps).
func (in *inner) klogLine(msg []byte) bool {
	if len(msg) < 21 || !klogLevel(msg[0]) || !isDigit(msg[1]) {
		return false
	}
	if in.klog == nil {
		in.klog = &Klog{}
	}
	in.scratch.Reset()
	return in.klog.Parse(msg, &in.scratch) == nil
}

// add appends the fields of msg to rec: the fields of msg read as JSON,
// klog or logfmt if it is one of those (read), else one field key=msg.
// Keys equal to one of outer get innerPrefix. It reports whether msg was
// structured.
func (in *inner) add(rec *Record, key string, msg []byte, outer ...string) bool {
	return in.copyOut(rec, key, msg, in.read(msg), outer)
}

// read reads msg into in.scratch as JSON, klog or logfmt, and says
// whether it is one of those, with a field at least; copyOut then adds
// what it read.
func (in *inner) read(msg []byte) bool {
	in.scratch.Reset()
	ok := false
	switch {
	case len(msg) >= 2 && msg[0] == '{':
		ok = in.json.Parse(msg, &in.scratch) == nil
	case in.klogLine(msg):
		ok = true
	case in.logfmt.Sniff(msg) >= 0.5:
		in.scratch.Reset() // a klog line that failed may have left fields
		ok = in.logfmt.Parse(msg, &in.scratch) == nil
	}
	return ok && in.scratch.Len() > 0
}

// addPairs is add for msg known to be key=value pairs (klog's structured
// arguments, where one pair is as sure as many): read as logfmt whatever
// its score.
func (in *inner) addPairs(rec *Record, key string, msg []byte, outer ...string) bool {
	in.scratch.Reset()
	ok := in.logfmt.Parse(msg, &in.scratch) == nil
	return in.copyOut(rec, key, msg, ok, outer)
}

// copyOut appends the fields read into in.scratch to rec (or key=msg when
// the read failed or gave none), prefixing keys of outer.
func (in *inner) copyOut(rec *Record, key string, msg []byte, ok bool, outer []string) bool {
	if !ok || in.scratch.Len() == 0 {
		rec.AddKV(key, msg)
		return false
	}
	for i := 0; i < in.scratch.Len(); i++ {
		k := in.scratch.Key(i)
		renamed := false
		for _, o := range outer {
			if string(k) == o {
				renamed = true
				break
			}
		}
		k0 := int32(len(rec.buf))
		if renamed {
			rec.buf = append(rec.buf, innerPrefix...)
		}
		rec.buf = append(rec.buf, k...)
		v0 := int32(len(rec.buf))
		rec.buf = append(rec.buf, in.scratch.Value(i)...)
		rec.end(k0, v0)
	}
	return true
}
