package plan

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// WriteFile writes a file whole or not at all: write fills a temporary
// file in the same folder, which is then renamed over path. A failure at
// any step removes the temporary file and leaves path as it was.
func WriteFile(path string, write func(io.Writer) error) (err error) {
	// The rename would put a plain file in the place of a device, a pipe
	// or a folder (as root, /dev/full itself): refuse anything but a
	// regular file or a new name.
	if fi, err := os.Stat(path); err == nil && !fi.Mode().IsRegular() {
		return fmt.Errorf("plan: %s is not a regular file; --out writes a file whole or not at all (leave out --out to write to standard output)", path)
	}
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("plan: cannot write %s: %w", path, err)
	}
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(f.Name())
		}
	}()
	if err = write(f); err != nil {
		return fmt.Errorf("plan: writing %s: %w", path, err)
	}
	if err = f.Sync(); err != nil {
		return fmt.Errorf("plan: writing %s: %w", path, err)
	}
	if err = f.Close(); err != nil {
		return fmt.Errorf("plan: writing %s: %w", path, err)
	}
	if err = os.Chmod(f.Name(), 0o644); err != nil {
		return fmt.Errorf("plan: writing %s: %w", path, err)
	}
	if err = os.Rename(f.Name(), path); err != nil {
		return fmt.Errorf("plan: cannot put %s in place: %w", path, err)
	}
	return nil
}
