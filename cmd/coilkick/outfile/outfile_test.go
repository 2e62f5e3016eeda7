package outfile

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// TestWriteKeepsTargetOnError: a failed write leaves the old content and
// no temporary file behind; a good one replaces it.
func TestWriteKeepsTargetOnError(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	name := filepath.Join(dir, "out.csv")
	if err := os.WriteFile(name, []byte("old\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	err := Write(name, func(w io.Writer) error {
		io.WriteString(w, "half of the new")
		return errors.New("disk full")
	})
	if err == nil {
		t.Fatal("error not reported")
	}
	if got, _ := os.ReadFile(name); string(got) != "old\n" {
		t.Errorf("target after a failed write: %q", got)
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 1 {
		t.Errorf("%d files left in the directory, want 1", len(entries))
	}
	if err := Write(name, func(w io.Writer) error { _, err := io.WriteString(w, "new\n"); return err }); err != nil {
		t.Fatal(err)
	}
	if got, _ := os.ReadFile(name); string(got) != "new\n" {
		t.Errorf("target after a good write: %q", got)
	}
	if st, _ := os.Stat(name); st.Mode().Perm() != 0o644 {
		t.Errorf("mode %v, want 0644", st.Mode().Perm())
	}
}

// fullDisk is a writer that accepts limit bytes and then fails with
// ENOSPC, as a full disk does.
type fullDisk struct {
	w     io.Writer
	limit int
}

func (f *fullDisk) Write(p []byte) (int, error) {
	if len(p) <= f.limit {
		f.limit -= len(p)
		return f.w.Write(p)
	}
	n, _ := f.w.Write(p[:f.limit])
	f.limit = 0
	return n, syscall.ENOSPC
}

// TestSetFullDisk: the disk fills up while the second of three files is
// written: no target changes (the first, already complete, is not renamed
// either), no temporary file is left, and the error names the file and
// the cause. With room, all three are replaced.
func TestSetFullDisk(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	names := []string{filepath.Join(dir, "a.csv"), filepath.Join(dir, "b.json"), filepath.Join(dir, "c.svg")}
	for _, n := range names[:2] {
		os.WriteFile(n, []byte("old "+filepath.Base(n)), 0o644)
	}
	content := func(n string) func(io.Writer) error {
		return func(w io.Writer) error {
			for k := 0; k < 100; k++ { // 1200 bytes in small writes
				if _, err := io.WriteString(w, "new content\n"); err != nil {
					return err
				}
			}
			return nil
		}
	}
	budget := 1200 + 500 // the first file and part of the second
	s := Set{Wrap: func(w io.Writer) io.Writer {
		fd := &fullDisk{w: w, limit: budget}
		budget = max(0, budget-1200)
		return fd
	}}
	for _, n := range names {
		s.Add(n, content(n))
	}
	err := s.Commit()
	if err == nil || !strings.Contains(err.Error(), "b.json") || !strings.Contains(err.Error(), "no space left") {
		t.Fatalf("Commit on a full disk: %v; want an error naming b.json and the cause", err)
	}
	for _, n := range names[:2] {
		if got, _ := os.ReadFile(n); string(got) != "old "+filepath.Base(n) {
			t.Errorf("%s changed by a failed set: %q", filepath.Base(n), got)
		}
	}
	if _, err := os.Stat(names[2]); !os.IsNotExist(err) {
		t.Errorf("c.svg created by a failed set")
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 2 {
		t.Errorf("%d files in the folder after a failed set, want the 2 old ones", len(entries))
	}
	s.Wrap = nil
	if err := s.Commit(); err != nil {
		t.Fatal(err)
	}
	for _, n := range names {
		if got, _ := os.ReadFile(n); len(got) != 1200 {
			t.Errorf("%s: %d bytes after a good set, want 1200", filepath.Base(n), len(got))
		}
	}
}

// TestWriteThroughLink: an output named by a symbolic link replaces the
// file the link points to; the link stays a link.
func TestWriteThroughLink(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	real := filepath.Join(dir, "real.csv")
	link := filepath.Join(dir, "link.csv")
	os.WriteFile(real, []byte("old"), 0o644)
	if err := os.Symlink(real, link); err != nil {
		t.Skip(err)
	}
	if err := Write(link, func(w io.Writer) error { _, err := io.WriteString(w, "new"); return err }); err != nil {
		t.Fatal(err)
	}
	if got, _ := os.ReadFile(real); string(got) != "new" {
		t.Errorf("target of the link: %q, want new", got)
	}
	if st, _ := os.Lstat(link); st.Mode()&os.ModeSymlink == 0 {
		t.Errorf("the link was replaced by a file")
	}
}

func TestCheck(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	fifo := filepath.Join(dir, "fifo")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	file := filepath.Join(dir, "file.txt")
	os.WriteFile(file, nil, 0o644)
	for _, c := range []struct {
		name, want string
	}{
		{filepath.Join(dir, "new.csv"), ""},
		{file, ""},
		{"-", ""},
		{dir, "is a folder"},
		{fifo, "not a regular file"},
		{"/dev/null", "not a regular file"},
		{filepath.Join(dir, "no", "such", "x.csv"), "does not exist"},
		{filepath.Join(file, "x.csv"), "not a folder"},
		{"", "empty"},
	} {
		err := Check(c.name)
		switch {
		case c.want == "" && err != nil:
			t.Errorf("Check(%q) = %v, want nil", c.name, err)
		case c.want != "" && (err == nil || !strings.Contains(err.Error(), c.want)):
			t.Errorf("Check(%q) = %v, want an error with %q", c.name, err, c.want)
		}
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 2 {
		t.Errorf("Check left %d files in the folder, want 2", len(entries))
	}
}

func TestSameAsAny(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	in := filepath.Join(dir, "valve.yaml")
	os.WriteFile(in, []byte("x"), 0o644)
	if got := SameAsAny(filepath.Join(dir, ".", "valve.yaml"), "other.csv", in); got != in {
		t.Errorf("SameAsAny = %q, want %q", got, in)
	}
	if got := SameAsAny(filepath.Join(dir, "out.csv"), in); got != "" {
		t.Errorf("SameAsAny = %q for a new file", got)
	}
	if got := SameAsAny("-", in); got != "" {
		t.Errorf("standard output named an input")
	}
	// Links: to the file, and to its folder.
	link := filepath.Join(dir, "link.yaml")
	sub := filepath.Join(dir, "sub")
	os.Mkdir(sub, 0o755)
	dirLink := filepath.Join(sub, "up")
	if err := os.Symlink(in, link); err != nil {
		t.Skip(err)
	}
	os.Symlink(dir, dirLink)
	if got := SameAsAny(link, in); got != in {
		t.Errorf("a link to the input: SameAsAny = %q", got)
	}
	if got := SameAsAny(filepath.Join(dirLink, "valve.yaml"), in); got != in {
		t.Errorf("the input through a linked folder: SameAsAny = %q", got)
	}
	// Two outputs, neither existing yet, one through a linked folder.
	if got := SameAsAny(filepath.Join(dirLink, "new.csv"), filepath.Join(dir, "new.csv")); got == "" {
		t.Errorf("the same new file by two paths not recognized")
	}
}

// TestWriteNeverReplacesSpecialFiles: even without Check first, Write
// refuses to rename over a FIFO or a folder (as root, a rename would
// replace a device node such as /dev/null with a plain file).
func TestWriteNeverReplacesSpecialFiles(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	fifo := filepath.Join(dir, "fifo")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	folder := filepath.Join(dir, "folder")
	os.Mkdir(folder, 0o755)
	for _, name := range []string{fifo, folder} {
		err := Write(name, func(w io.Writer) error { _, err := io.WriteString(w, "data"); return err })
		if err == nil || !strings.Contains(err.Error(), "not a regular file") {
			t.Errorf("Write(%s) = %v, want a refusal", filepath.Base(name), err)
		}
	}
	if st, err := os.Lstat(fifo); err != nil || st.Mode()&os.ModeNamedPipe == 0 {
		t.Errorf("the FIFO was replaced")
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 2 {
		t.Errorf("%d entries in the folder, want 2 (no temporary file left)", len(entries))
	}
}
