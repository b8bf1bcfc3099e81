//go:build unix

package cli

import (
	"os"
	"os/signal"
	"sync"
	"syscall"

	tea "github.com/charmbracelet/bubbletea"
)

// screenSignals makes the signals that would otherwise leave the terminal
// in the screen's modes (alternate screen, mouse reporting, hidden cursor,
// raw input) go through the program, which restores it:
//
//   - SIGHUP and SIGQUIT quit the screen; the returned stop func then gives
//     the signal, for the exit code (129, 131). (SIGINT and SIGTERM are
//     the context's, see main.)
//   - SIGTSTP (kill -TSTP; ctrl+z on the screen is a key, see ui, that
//     sends one) suspends it: the terminal is given back, the process
//     stops, and on SIGCONT (fg) the screen comes back.
//
// stop ends the handling; call it once the program has returned.
//
// The program's own suspension (tea.Suspend) stops the process group with
// a SIGTSTP, which this handler would catch and swallow; so ctrl+z on the
// screen (suspendSelf) sends SIGTSTP here too, and one path suspends.
func screenSignals(p *tea.Program) (stop func() *Interrupted) {
	sigs := make(chan os.Signal, 4)
	signal.Notify(sigs, syscall.SIGHUP, syscall.SIGQUIT, syscall.SIGTSTP, syscall.SIGCONT)
	done := make(chan struct{})
	var mu sync.Mutex
	var got *Interrupted
	go func() {
		suspending := false
		for {
			select {
			case <-done:
				return
			case s := <-sigs:
				switch {
				case s == syscall.SIGCONT:
					suspending = false // fg: the program takes the terminal back
				case s == syscall.SIGTSTP && !suspending:
					// Give the terminal back first: the program releases
					// it, then stops the process group with a SIGTSTP of
					// its own (next case).
					suspending = true
					go p.Send(tea.SuspendMsg{})
				case s == syscall.SIGTSTP:
					// Once caught, SIGTSTP no longer stops a Go process
					// (the runtime keeps its handler), so stop as the
					// program meant to, with the signal that cannot be
					// caught. The shell sees a stopped job; fg continues
					// it.
					syscall.Kill(0, syscall.SIGSTOP)
				default:
					mu.Lock()
					got = &Interrupted{Signal: s}
					mu.Unlock()
					p.Quit()
				}
			}
		}
	}()
	return func() *Interrupted {
		signal.Stop(sigs)
		close(done)
		mu.Lock()
		defer mu.Unlock()
		return got
	}
}

// suspendSelf is the screen's ctrl+z: a SIGTSTP to this process, which
// screenSignals turns into a suspension that gives the terminal back.
func suspendSelf() tea.Msg {
	syscall.Kill(os.Getpid(), syscall.SIGTSTP)
	return nil
}
