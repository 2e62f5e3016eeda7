package outfile

import (
	"errors"
	"io"
	"os"
	"path/filepath"
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
}
