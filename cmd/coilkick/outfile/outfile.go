// Package outfile writes the command's output files atomically: the
// content goes to a temporary file in the target's directory, which is
// renamed over the target only when the whole content was written, synced
// and closed without error. A failed write (a full disk, a file size
// limit) leaves the target as it was (no truncated file), and readers
// never see a half-written one. A Set does the same for several files at
// once: either every file of the set is replaced or none is.
//
// It also checks output paths before any work is done (Check) and answers
// whether an output path names one of the command's input files
// (SameAsAny), following symbolic links, so that no output overwrites an
// input.
package outfile

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
)

// Write writes the file name with write, atomically. A name that is a
// symbolic link is written through: the file it points to is replaced.
func Write(name string, write func(io.Writer) error) error {
	var s Set
	s.Add(name, write)
	return s.Commit()
}

// A Set is a group of output files written together: Commit writes each to
// a temporary file beside its target and renames them into place only when
// all were written. The zero Set is ready to use.
type Set struct {
	files []pending
	// Wrap, when not nil, wraps the writer of each temporary file (tests
	// use it to fail a write after some bytes, as a full disk does).
	Wrap func(io.Writer) io.Writer
}

type pending struct {
	name  string
	write func(io.Writer) error
}

// Add queues the file name, whose content write produces.
func (s *Set) Add(name string, write func(io.Writer) error) {
	s.files = append(s.files, pending{name, write})
}

// Len is the number of files queued.
func (s *Set) Len() int { return len(s.files) }

// Commit writes every queued file to a temporary file in its target's
// directory, then renames them over their targets. When any write fails,
// every temporary file is removed and no target is touched; the error
// names the file. (A failure of a rename itself, after the others
// succeeded, can leave the earlier targets replaced; renames within one
// directory do not fail for want of space.)
func (s *Set) Commit() (err error) {
	type done struct{ tmp, target string }
	var temps []done
	defer func() {
		if err != nil {
			for _, d := range temps {
				os.Remove(d.tmp)
			}
		}
	}()
	for _, f := range s.files {
		target := resolveTarget(f.name)
		// Never rename over a folder or a special file (a device, a
		// FIFO): Check says so first; this is the last guard.
		if st, err := os.Stat(target); err == nil && !st.Mode().IsRegular() {
			return fmt.Errorf("%s is not a regular file (%v): not replaced", f.name, st.Mode().Type())
		}
		tmp, err := writeTemp(target, f.write, s.Wrap)
		if tmp != "" {
			temps = append(temps, done{tmp, target})
		}
		if err != nil {
			return fmt.Errorf("%s: %v", f.name, err)
		}
	}
	for k, d := range temps {
		if err := os.Rename(d.tmp, d.target); err != nil {
			temps = temps[k:]
			return fmt.Errorf("%s: %v", s.files[k].name, unwrapPath(err))
		}
	}
	return nil
}

// writeTemp writes a temporary file beside target and returns its name
// (also on error, when it was created).
func writeTemp(target string, write func(io.Writer) error, wrap func(io.Writer) io.Writer) (string, error) {
	dir, base := filepath.Split(target)
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, "."+base+".tmp*")
	if err != nil {
		return "", unwrapPath(err)
	}
	var w io.Writer = f
	if wrap != nil {
		w = wrap(f)
	}
	werr := write(w)
	if werr == nil {
		werr = f.Sync()
	}
	if cerr := f.Close(); werr == nil {
		werr = cerr
	}
	if werr == nil {
		// CreateTemp makes the file 0600; outputs are ordinary files.
		werr = os.Chmod(f.Name(), 0o644)
	}
	return f.Name(), unwrapPath(werr)
}

// resolveTarget follows symbolic links in name when it exists, so that an
// output named by a link replaces the file the link points to.
func resolveTarget(name string) string {
	if r, err := filepath.EvalSymlinks(name); err == nil {
		return r
	}
	return name
}

// Check tells, before any work is done, whether name can be written as an
// output: its folder exists and takes new files, and name is not a folder
// or a special file (a device, a FIFO: the temporary-file-and-rename would
// replace the special file itself). "-" (standard output) passes.
func Check(name string) error {
	if name == "-" {
		return nil
	}
	if name == "" {
		return errors.New("empty output file name")
	}
	target := resolveTarget(name)
	if st, err := os.Stat(target); err == nil {
		switch {
		case st.IsDir():
			return fmt.Errorf("%s is a folder, not a file", name)
		case !st.Mode().IsRegular():
			return fmt.Errorf("%s is not a regular file (%v); outputs are written as new files (use - for standard output where the flag allows it)", name, st.Mode().Type())
		}
	}
	dir := filepath.Dir(target)
	st, err := os.Stat(dir)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return fmt.Errorf("%s: folder %s does not exist", name, dir)
	case err != nil:
		return fmt.Errorf("%s: folder %s: %v", name, dir, unwrapPath(err))
	case !st.IsDir():
		return fmt.Errorf("%s: %s is not a folder", name, dir)
	}
	probe, err := os.CreateTemp(dir, ".coilkick-probe*")
	if err != nil {
		return fmt.Errorf("%s: cannot write in folder %s: %v", name, dir, unwrapPath(err))
	}
	probe.Close()
	os.Remove(probe.Name())
	return nil
}

// Resolved is name with symbolic links followed and made absolute, for
// comparing paths: the file itself when it exists, else its folder's
// resolved path joined with its base name.
func Resolved(name string) string {
	if r, err := filepath.EvalSymlinks(name); err == nil {
		if a, err := filepath.Abs(r); err == nil {
			return a
		}
		return r
	}
	dir, base := filepath.Split(name)
	if dir == "" {
		dir = "."
	}
	if r, err := filepath.EvalSymlinks(dir); err == nil {
		dir = r
	}
	if a, err := filepath.Abs(dir); err == nil {
		dir = a
	}
	return filepath.Join(dir, base)
}

// SameAsAny reports the input that the output path names (the same file,
// by device and inode, or the same path once symbolic links are followed)
// or "" when it names none of them.
func SameAsAny(out string, inputs ...string) string {
	if out == "" || out == "-" {
		return ""
	}
	so, errO := os.Stat(out)
	ro := Resolved(out)
	for _, in := range inputs {
		if in == "" || in == "-" {
			continue
		}
		if si, errI := os.Stat(in); errO == nil && errI == nil && os.SameFile(so, si) {
			return in
		}
		if Resolved(in) == ro {
			return in
		}
	}
	return ""
}

// unwrapPath drops the path an os.PathError repeats (messages name the
// output already).
func unwrapPath(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return fmt.Errorf("%s: %v", pe.Op, pe.Err)
	}
	return err
}
