package parse

// facilityNames are the keywords for the RFC 5424 facility codes 0..23, as
// syslog.conf spells them (common practice: RFC 5424 table 1 gives only
// descriptions; codes 13 and 14 are "log audit" and "log alert").
var facilityNames = [24]string{
	"kern", "user", "mail", "daemon", "auth", "syslog", "lpr", "news",
	"uucp", "cron", "authpriv", "ftp", "ntp", "audit", "alert", "clock",
	"local0", "local1", "local2", "local3", "local4", "local5", "local6", "local7",
}

// severityNames are the keywords for the RFC 5424 severity codes 0..7
// (table 2), as syslog.conf spells them.
var severityNames = [8]string{"emerg", "alert", "crit", "err", "warning", "notice", "info", "debug"}

// pri reads "<N>" at the start of line, 0 ≤ N ≤ 191, and returns N and the
// rest of the line; ok is false when line does not start with a valid PRI.
func pri(line []byte) (n int, rest []byte, ok bool) {
	if len(line) < 3 || line[0] != '<' {
		return 0, line, false
	}
	i := 1
	for i < len(line) && i <= 4 && line[i] >= '0' && line[i] <= '9' {
		n = n*10 + int(line[i]-'0')
		i++
	}
	if i == 1 || i > 4 || i >= len(line) || line[i] != '>' || n > 191 {
		return 0, line, false
	}
	// RFC 5424 6.2.1: no leading zeros except for PRI 0 itself.
	if line[1] == '0' && i > 2 {
		return 0, line, false
	}
	return n, line[i+1:], true
}

// addPRI adds the facility and severity named by a PRI value.
func addPRI(rec *Record, n int) {
	rec.AddString("facility", facilityNames[n>>3])
	rec.AddString("severity", severityNames[n&7])
}

// token returns the run of bytes up to the next space and the rest after
// that space; more is false when there was no space.
func token(b []byte) (tok, rest []byte, more bool) {
	for i, c := range b {
		if c == ' ' {
			return b[:i], b[i+1:], true
		}
	}
	return b, nil, false
}

// addUnlessNil adds key=value unless value is the NILVALUE "-".
func addUnlessNil(rec *Record, key string, value []byte) {
	if len(value) == 1 && value[0] == '-' {
		return
	}
	rec.AddKV(key, value)
}
