// Package outfile writes the command's output files atomically: the
// content goes to a temporary file in the target's directory, which is
// renamed over the target only when the whole content was written and
// closed without error. A failed write leaves the target as it was (no
// truncated file), and readers never see a half-written one.
//
// It also answers whether an output path names one of the command's input
// files, so that no output overwrites an input.
package outfile

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// Write writes the file name with write, atomically.
func Write(name string, write func(io.Writer) error) (err error) {
	dir, base := filepath.Split(name)
	if dir == "" {
		dir = "."
	}
	tmp, err := os.CreateTemp(dir, "."+base+".tmp*")
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	if err = write(tmp); err != nil {
		return fmt.Errorf("%s: %v", name, err)
	}
	if err = tmp.Sync(); err != nil {
		return fmt.Errorf("%s: %v", name, err)
	}
	if err = tmp.Close(); err != nil {
		return fmt.Errorf("%s: %v", name, err)
	}
	// CreateTemp makes the file 0600; outputs are ordinary files.
	if err = os.Chmod(tmp.Name(), 0o644); err != nil {
		return err
	}
	return os.Rename(tmp.Name(), name)
}

// SameAsAny reports the input that the output path names (the same file,
// by device and inode, or the same cleaned path when neither exists yet),
// or "" when it names none of them.
func SameAsAny(out string, inputs ...string) string {
	if out == "" || out == "-" {
		return ""
	}
	so, errO := os.Stat(out)
	for _, in := range inputs {
		if in == "" || in == "-" {
			continue
		}
		si, errI := os.Stat(in)
		switch {
		case errO == nil && errI == nil:
			if os.SameFile(so, si) {
				return in
			}
		case filepath.Clean(out) == filepath.Clean(in):
			return in
		}
	}
	return ""
}
