//go:build unix

package parse

import (
	"os"
	"syscall"
)

// linkCount is the number of names the file has; 0 means it was deleted.
func linkCount(fi os.FileInfo) (uint64, bool) {
	st, ok := fi.Sys().(*syscall.Stat_t)
	if !ok {
		return 0, false
	}
	return uint64(st.Nlink), true
}
