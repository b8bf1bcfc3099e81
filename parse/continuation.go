package parse

import "bytes"

// LooksContinuation says whether line looks like the continuation of a
// message that spans lines rather than a record of its own: a stack
// trace's frame or any indented line ("\tat quay.Planner.plan(…)",
// "  File \"berth.py\", line 12"), a cause or an elision ("Caused by: …",
// "... 3 more"), a Python traceback's head, or an exception's first line
// ("java.lang.IllegalStateException: …", "ValueError: …"). Services write
// these after the record they belong to, one line each, with none of the
// record's header.
//
// Detection leaves such lines out (when they are the fewer), so that a log
// with stack traces is still read with its header's fields, and they never
// make ingest detect the format again.
func LooksContinuation(line []byte) bool {
	if len(line) == 0 {
		return false
	}
	if line[0] == ' ' || line[0] == '\t' {
		rest := bytes.TrimLeft(line, " \t")
		// An indented object or syslog line is a record that was indented.
		return len(rest) > 0 && rest[0] != '{' && rest[0] != '<'
	}
	for _, p := range continuationPrefixes {
		if bytes.HasPrefix(line, p) {
			return true
		}
	}
	return exceptionHead(line)
}

var continuationPrefixes = [][]byte{
	[]byte("Caused by: "), []byte("Suppressed: "), []byte("... "),
	[]byte("Traceback (most recent call last):"),
}

// exceptionHead says whether line starts with an exception's class name
// (letters, digits, '_' and '$', in dotted parts, the last ending in
// Exception, Error or Throwable), then ':' or the end of the line.
func exceptionHead(line []byte) bool {
	i := 0
	for i < len(line) && (isLetter(line[i]) || line[i] >= '0' && line[i] <= '9' || line[i] == '_' || line[i] == '$' || line[i] == '.') {
		i++
	}
	if i == len(line) || line[i] == ':' {
		name := line[:i]
		if len(name) > 0 && isLetter(name[0]) {
			for _, end := range [][]byte{[]byte("Exception"), []byte("Error"), []byte("Throwable")} {
				if bytes.HasSuffix(name, end) {
					return true
				}
			}
		}
	}
	return false
}
