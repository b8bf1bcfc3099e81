package cli

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"sync/atomic"
	"syscall"

	"bitsift/ingest"
	"bitsift/model"
)

// More exit codes, as documented in the README (see cli.go for 0–3).
const (
	// ExitWrite: the output could not be written (a full disk, a closed
	// terminal, an --out file that cannot be made), whatever the input.
	ExitWrite = 4
	// ExitNoRecords: the input was read but held no record (it was empty,
	// or every line was rejected: a wrong --format, binary data): as
	// ExitUnreadable, nothing of it could be read.
	ExitNoRecords = ExitUnreadable
	// ExitInterrupted is 128 + SIGINT, the shell's convention; SIGTERM
	// gives 128 + 15 = 143.
	ExitInterrupted = 130
)

// Interrupted is the cause of a context cancelled by a signal.
type Interrupted struct{ Signal os.Signal }

func (e Interrupted) Error() string { return "interrupted by " + signalName(e.Signal) }

// Code is 128 + the signal's number.
func (e Interrupted) Code() int {
	if s, ok := e.Signal.(syscall.Signal); ok {
		return 128 + int(s)
	}
	return ExitInterrupted
}

func signalName(s os.Signal) string {
	switch s {
	case syscall.SIGINT:
		return "SIGINT"
	case syscall.SIGTERM:
		return "SIGTERM"
	}
	return s.String()
}

// selfStopping is set by a command whose interrupt is its ordinary end
// (a follow, a headless watch, the screen): it stops and reports on its
// own, so only a second signal ends it outright (see main).
var selfStopping atomic.Bool

// SelfStopping says whether the running command handles an interrupt
// itself: main then waits for it instead of ending it after a second.
func SelfStopping() bool { return selfStopping.Load() }

// interrupted is the exit for a run ended by ctx before its output was
// written: the code of the signal (130 when ctx ended otherwise) and a
// line on stderr saying nothing was written.
func interrupted(ctx context.Context, std IO) int {
	code, why := ExitInterrupted, "interrupted"
	var sig Interrupted
	if errors.As(context.Cause(ctx), &sig) {
		code, why = sig.Code(), sig.Error()
	}
	fmt.Fprintf(std.Err, "bitsift: %s before the output was complete; nothing was written\n", why)
	return code
}

// writeOut writes a rendered output to w whole, unless ctx ended while it
// was being made: an interrupted run leaves no partial output.
func writeOut(ctx context.Context, w io.Writer, out []byte) error {
	if err := ctx.Err(); err != nil {
		return err
	}
	if _, err := w.Write(out); err != nil {
		return writeError(err)
	}
	return nil
}

// writeError treats a closed pipe (bitsift report | head) as a quiet end;
// any other write failure has its own exit code.
func writeError(err error) error {
	if err == nil {
		return nil
	}
	if isBrokenPipe(err) {
		return &ExitError{Code: ExitOK, Err: errQuiet}
	}
	return &ExitError{Code: ExitWrite, Err: fmt.Errorf("writing the output: %w", err)}
}

// outcome is the exit of a run whose output is written: a fault of the
// input first (2 or 3), then a run with no record (readNotes names the
// first lines and the way out; noRecords an empty input).
func outcome(std IO, in *ingest.Ingester, readErr error, snap *model.Snapshot) error {
	if err := inputError(readErr, snap); err != nil {
		return err
	}
	if err := readNotes(std, in, readErr); err != nil {
		return err
	}
	return noRecords(snap)
}

// noRecords is the error of a run that made no record, naming the likely
// cause and the way out; nil when there were records.
func noRecords(snap *model.Snapshot) error {
	if snap.Records > 0 {
		return nil
	}
	in := snap.Input
	var msg string
	switch {
	case in.Lines == 0:
		msg = "no records: the input was empty"
	case in.Rejected == in.Lines:
		msg = fmt.Sprintf("no records: all %d lines were rejected", in.Lines)
		if len(in.RejectedExamples) > 0 {
			msg += fmt.Sprintf(" (line %d: %s)", in.RejectedExamples[0].Line, in.RejectedExamples[0].Reason)
		}
		if in.Format == "" || in.Format == "unknown" {
			msg += "; no format fits them: give --format NAME or --pattern REGEX"
		} else {
			msg += fmt.Sprintf("; read as %s: if that is the wrong format, give another with --format NAME, or --pattern REGEX for a format of your own", in.Format)
		}
	default:
		msg = fmt.Sprintf("no records in %d lines", in.Lines)
	}
	return &ExitError{Code: ExitNoRecords, Err: errors.New(msg)}
}
