// Package planted writes a harbour's berth-booking log with secrets planted
// in it: an e-mail address, a token and a number, in values, in free text
// that gets a template, in a number field that gets buckets and (when asked)
// in field names. Privacy tests in cli and ui grep every output and screen
// for them under --redact and --redact-fields.
package planted

import (
	"fmt"
	"strings"
)

// The planted secrets.
const (
	Mail   = "wren.holloway@quaymail.test"
	Token  = "tk7f3a9c2e81b4d6"
	Number = "739152"
)

// Fragments are the planted secrets and the recognisable parts of them
// (the e-mail's local part, its words): none may show under redaction.
var Fragments = []string{Mail, Token, Number, "wren", "holloway"}

// Fields are the fields whose values hold the secrets, for --redact-fields.
const Fields = "user,token,fee,msg"

// Log is a JSON log of 400 berth bookings (and one broken line) with the
// secrets planted in every fifth; names adds fields whose names hold them.
func Log(names bool) []byte {
	var b strings.Builder
	verbs := []string{"booked", "released", "moved", "held"}
	for i := 0; i < 400; i++ {
		user, token, fee := fmt.Sprintf("skipper%d@quaymail.test", i%37), fmt.Sprintf("tk%014x", i*7919), fmt.Sprint(1000+i*37)
		if i%5 == 0 {
			user, token, fee = Mail, Token, Number
		}
		msg := fmt.Sprintf("berth %d %s for %s with %s fee %s", i%12, verbs[i%4], user, token, fee)
		fmt.Fprintf(&b, `{"berth":%d,"user":%q,"token":%q,"fee":%s,"msg":%q`, i%12, user, token, fee, msg)
		if names {
			fmt.Fprintf(&b, `,"sessions":{%q:{"state":"open"},"skipper%d@quaymail.test":{"state":"shut"}},"grants":{%q:1},"limits":{%q:%d}`,
				Mail, i%23, Token, Number, i%3)
		}
		b.WriteString("}\n")
		if i == 7 {
			fmt.Fprintf(&b, "{\"user\":%q,\"token\":%q,\"fee\":%s broken\n", Mail, Token, Number)
		}
	}
	return []byte(b.String())
}
