package parse

import "bytes"

func init() { Register("envoy", func() Format { return &Envoy{} }) }

// Envoy reads the access log lines of the Envoy proxy in its default text
// format, and in the longer default of the Istio service mesh's sidecars,
// from memory of their documentation (Envoy's "Default format string";
// Istio's proxy access log default):
//
//	[START_TIME] "METHOD PATH PROTOCOL" RESPONSE_CODE RESPONSE_FLAGS
//	    BYTES_RECEIVED BYTES_SENT DURATION UPSTREAM_SERVICE_TIME
//	    "X-FORWARDED-FOR" "USER-AGENT" "X-REQUEST-ID" "AUTHORITY" "UPSTREAM_HOST"
//
// Istio adds RESPONSE_CODE_DETAILS, CONNECTION_TERMINATION_DETAILS and
// "UPSTREAM_TRANSPORT_FAILURE_REASON" after the flags, and UPSTREAM_CLUSTER,
// UPSTREAM_LOCAL_ADDRESS, DOWNSTREAM_LOCAL_ADDRESS,
// DOWNSTREAM_REMOTE_ADDRESS, REQUESTED_SERVER_NAME and ROUTE_NAME at the
// end. Fields are those names in lower case (time for START_TIME, method,
// path and protocol for the request line); "-" gives no field. A line with
// another number of fields (a format of one's own) is rejected: read it
// with --pattern.
type Envoy struct {
	toks    [][]byte
	scratch Record // for Sniff
}

var (
	envoyFields = []string{"response_code", "response_flags", "bytes_received", "bytes_sent", "duration",
		"upstream_service_time", "x_forwarded_for", "user_agent", "request_id", "authority", "upstream_host"}
	istioFields = []string{"response_code", "response_flags", "response_code_details", "connection_termination_details",
		"upstream_transport_failure_reason", "bytes_received", "bytes_sent", "duration", "upstream_service_time",
		"x_forwarded_for", "user_agent", "request_id", "authority", "upstream_host", "upstream_cluster",
		"upstream_local_address", "downstream_local_address", "downstream_remote_address", "requested_server_name", "route_name"}
)

// Name implements Format.
func (*Envoy) Name() string { return "envoy" }

// Sniff implements Format: a line that parses has no other format's shape.
func (e *Envoy) Sniff(line []byte) float64 {
	e.scratch.Reset()
	if e.Parse(line, &e.scratch) != nil {
		return 0
	}
	return 0.95
}

// Parse implements Format.
func (e *Envoy) Parse(line []byte, rec *Record) error {
	if len(line) < 30 || line[0] != '[' {
		return reject("no [START_TIME] at the start of an Envoy access log line")
	}
	end := 1
	for end < len(line) && line[end] != ']' {
		end++
	}
	if end >= len(line) || !looksRFC3339(line[1:end]) {
		return reject("no RFC 3339 [START_TIME] at the start of an Envoy access log line")
	}
	ts := line[1:end]
	rest := line[end+1:]
	if len(rest) < 2 || rest[0] != ' ' || rest[1] != '"' {
		return reject(`no "METHOD PATH PROTOCOL" after the Envoy start time`)
	}
	req, rest, ok := quoted(rest[1:])
	if !ok {
		return reject("unterminated request line")
	}
	method, after, more := token(req)
	path, proto, more2 := token(after)
	if !more || !more2 {
		return reject("the request line is not METHOD PATH PROTOCOL")
	}
	e.toks = e.toks[:0]
	for len(rest) > 0 {
		if rest[0] != ' ' {
			return reject("fields not separated by spaces")
		}
		rest = rest[1:]
		var tok []byte
		if len(rest) > 0 && rest[0] == '"' {
			if tok, rest, ok = quoted(rest); !ok {
				return reject("unterminated quoted field")
			}
		} else {
			i := bytes.IndexByte(rest, ' ')
			if i < 0 {
				i = len(rest)
			}
			tok, rest = rest[:i], rest[i:] // the separator stays for the loop
		}
		e.toks = append(e.toks, tok)
	}
	var names []string
	switch len(e.toks) {
	case len(envoyFields):
		names = envoyFields
	case len(istioFields):
		names = istioFields
	default:
		return reject("not Envoy's or Istio's default access log fields (a format of one's own: use --pattern)")
	}
	if !allDigits(e.toks[0]) && !(len(e.toks[0]) == 1 && e.toks[0][0] == '-') {
		return reject("the response code is not a number")
	}
	rec.AddKV("time", ts)
	addUnlessNil(rec, "method", method)
	addUnlessNil(rec, "path", path)
	addUnlessNil(rec, "protocol", proto)
	for i, name := range names {
		addUnlessNil(rec, name, e.toks[i])
	}
	return nil
}
