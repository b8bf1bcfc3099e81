package cli

import (
	"errors"
	"fmt"

	"bitsift/ingest"
	"bitsift/sanitize"
)

// readNotes prints what the reading warned about (a forced format that
// fits badly, a stream that changed shape) to standard error, and turns a
// run that read no record from lines it did read into exit code 2, with
// the first lines it could not read and a --pattern to start from (unless
// an input failed: readErr's exit code and message come first then).
func readNotes(std IO, in *ingest.Ingester, readErr error) error {
	for _, w := range in.Warnings() {
		fmt.Fprintln(std.Err, "bitsift: warning:", sanitize.String(w))
	}
	if msg := in.Unreadable(); msg != "" && readErr == nil {
		return &ExitError{Code: ExitUnreadable, Err: errors.New(msg)}
	}
	return nil
}
