package kafka

import (
	"bufio"
	"io"
	"os"
	"path/filepath"
)

// writeSafely writes a file whole or not at all, and durably before it
// returns: a temporary file in the same folder, flushed to disk, renamed
// into place, then the folder flushed so that the rename itself survives a
// crash. A worker commits offsets only after this returns.
func writeSafely(path string, write func(io.Writer) error) error {
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, ".bitsift-part-*")
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(tmp, 256<<10)
	err = write(bw)
	if err == nil {
		err = bw.Flush()
	}
	if err == nil {
		err = tmp.Sync()
	}
	if cerr := tmp.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(tmp.Name(), path)
	}
	if err != nil {
		os.Remove(tmp.Name())
		return err
	}
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer d.Close()
	return d.Sync()
}
