package parse

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestFileSourceFaultsKeepWhatCameBefore: a truncated or corrupt .gz or
// .zst gives every line before the fault, then one fault with the file and
// the offset in it.
func TestFileSourceFaultsKeepWhatCameBefore(t *testing.T) {
	var b bytes.Buffer
	for i := 0; i < 50000; i++ {
		fmt.Fprintf(&b, "n=%d level=info msg=\"request served\" pad=%d\n", i, i*7919%100003)
	}
	orig := strings.Split(strings.TrimSuffix(b.String(), "\n"), "\n")
	gz, zst := gzipBytes(t, b.Bytes()), zstdBytes(t, b.Bytes())
	corrupt := func(p []byte) []byte {
		c := bytes.Clone(p)
		for i := len(c) / 2; i < len(c)/2+64; i++ {
			c[i] ^= 0xa5
		}
		return c
	}
	tests := []struct {
		name    string
		content []byte
		reason  string
	}{
		{"truncated.gz", gz[:len(gz)/2], "truncated"},
		{"truncated.zst", zst[:len(zst)/2], "truncated"},
		{"corrupt.zst", corrupt(zst), "zstd data is corrupt"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			p := filepath.Join(t.TempDir(), tt.name)
			if err := os.WriteFile(p, tt.content, 0o644); err != nil {
				t.Fatal(err)
			}
			fs := NewFileSource([]string{p}, 0)
			defer fs.Close()
			var got []string
			var fault error
			for {
				l, err := fs.Next(context.Background())
				if errors.Is(err, io.EOF) {
					break
				}
				if err != nil {
					if fault != nil {
						t.Fatalf("a second fault: %v", err)
					}
					fault = err
					continue
				}
				got = append(got, string(l.Text))
			}
			var se *SourceError
			if !errors.As(fault, &se) || se.Source != p || se.Offset <= 0 || se.Offset > int64(len(tt.content)) ||
				!strings.Contains(fault.Error(), tt.reason) {
				t.Fatalf("fault %v, want one naming %s, an offset and %q", fault, p, tt.reason)
			}
			// Every line but a cut-off last one is the original's, in
			// order, none skipped.
			whole := 0
			for whole < len(got) && whole < len(orig) && got[whole] == orig[whole] {
				whole++
			}
			if whole < len(got)-1 || whole < len(orig)/4 {
				t.Errorf("%d lines, of which the first %d match the original (of %d)", len(got), whole, len(orig))
			}
		})
	}
}

func TestFileSourceUnreadableSaysWhy(t *testing.T) {
	dir := t.TempDir()
	tests := []struct {
		name, path, want string
	}{
		{"missing", filepath.Join(dir, "nothere.log"), "no such file"},
		{"folder", dir, "is a folder"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			fs := NewFileSource([]string{tt.path}, 0)
			defer fs.Close()
			_, err := fs.Next(context.Background())
			if err == nil || !strings.Contains(err.Error(), tt.want) || strings.Contains(err.Error(), "\n") ||
				!strings.HasPrefix(err.Error(), tt.path+": ") {
				t.Errorf("error %v, want one line naming the file and %q", err, tt.want)
			}
		})
	}
}
