package parse

import "testing"

// TestEnvoy: lines in Envoy's default access log format and in Istio's
// longer default, written from memory of those projects' documentation
// (an Envoy default line of its access logging page; an Istio sidecar's),
// with the wanted values read off the lines by eye; "-" gives no field.
func TestEnvoy(t *testing.T) {
	runParseCases(t, &Envoy{}, []parseCase{
		{name: "envoy default", line: `[2016-04-15T20:17:00.310Z] "POST /api/v1/locations HTTP/2" 204 - 154 0 226 100 "10.0.35.28" "nsq2http" "cc21d9b0-cf5c-432b-8c7e-98aeb7988cd2" "locations" "tcp://10.0.2.1:80"`,
			want: map[string]string{"time": "2016-04-15T20:17:00.310Z", "method": "POST", "path": "/api/v1/locations", "protocol": "HTTP/2",
				"response_code": "204", "bytes_received": "154", "bytes_sent": "0", "duration": "226", "upstream_service_time": "100",
				"x_forwarded_for": "10.0.35.28", "user_agent": "nsq2http", "request_id": "cc21d9b0-cf5c-432b-8c7e-98aeb7988cd2",
				"authority": "locations", "upstream_host": "tcp://10.0.2.1:80"}},
		{name: "istio default", line: `[2025-03-02T06:00:05.075Z] "GET /v1/zones/east HTTP/1.1" 503 UF upstream_reset_before_response_started{connection_failure} - "delayed connect error: 111" 0 91 3 - "-" "gh-probe/2.0" "7b8c9d0e" "zones.gh.svc.cluster.local" "10.4.1.4:8080" outbound|8080||zones.gh.svc.cluster.local - 10.4.1.4:8080 10.4.0.9:40318 - default`,
			want: map[string]string{"time": "2025-03-02T06:00:05.075Z", "method": "GET", "path": "/v1/zones/east", "protocol": "HTTP/1.1",
				"response_code": "503", "response_flags": "UF", "response_code_details": "upstream_reset_before_response_started{connection_failure}",
				"upstream_transport_failure_reason": "delayed connect error: 111", "bytes_received": "0", "bytes_sent": "91", "duration": "3",
				"user_agent": "gh-probe/2.0", "request_id": "7b8c9d0e", "authority": "zones.gh.svc.cluster.local", "upstream_host": "10.4.1.4:8080",
				"upstream_cluster": "outbound|8080||zones.gh.svc.cluster.local", "downstream_local_address": "10.4.1.4:8080",
				"downstream_remote_address": "10.4.0.9:40318", "route_name": "default"}},
		{name: "a field short", line: `[2016-04-15T20:17:00.310Z] "POST /a HTTP/2" 204 - 154 0 226 100 "10.0.35.28" "nsq2http" "cc21" "locations"`, reject: "default access log fields"},
		{name: "no time", line: `"POST /a HTTP/2" 204 - 154 0 226 100 "-" "-" "-" "-" "-" and more`, reject: "START_TIME"},
		{name: "code not a number", line: `[2016-04-15T20:17:00.310Z] "POST /a HTTP/2" OK - 154 0 226 100 "-" "-" "-" "-" "-"`, reject: "response code"},
		{name: "unterminated", line: `[2016-04-15T20:17:00.310Z] "POST /a HTTP/2" 204 - 154 0 226 100 "10.0.35.28 nsq2http`, reject: "unterminated"},
	})
}
