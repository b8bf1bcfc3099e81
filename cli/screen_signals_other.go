//go:build !unix

package cli

import tea "github.com/charmbracelet/bubbletea"

// screenSignals: SIGINT and SIGTERM are the context's (see main); there is
// nothing more to catch here.
func screenSignals(*tea.Program) func() *Interrupted { return func() *Interrupted { return nil } }

// suspendSelf: no job control here; ctrl+z does what bubbletea does.
var suspendSelf tea.Cmd = tea.Suspend
