package coilkick

import (
	"bytes"
	"fmt"
	"io"
	"os"
)

// Input-file limits. A scenario, a flux-linkage table, a B–H curve or a
// bench trace larger than this is refused rather than read until memory
// runs out (a trace of a million samples with a few columns is about 50
// MB; scenarios are kilobytes).
const (
	MaxScenarioBytes = 1 << 20  // 1 MiB
	MaxTableBytes    = 64 << 20 // 64 MiB: flux tables, B–H curves, traces
)

// ReadInput reads an input file the tool was given, refusing what is not a
// regular file (a directory, a FIFO that would block, a device such as
// /dev/zero that never ends) and files above limit bytes. what names the
// input in messages ("scenario", "flux-linkage table", "trace").
func ReadInput(path, what string, limit int64) ([]byte, error) {
	f, err := OpenInput(path, what, limit)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var buf bytes.Buffer
	n, err := io.Copy(&buf, io.LimitReader(f, limit+1))
	if err != nil {
		return nil, fmt.Errorf("%s: %v", path, err)
	}
	if n > limit {
		return nil, fmt.Errorf("%s: %s larger than %d bytes: refused", path, what, limit)
	}
	return buf.Bytes(), nil
}

// OpenInput opens an input file after the checks of ReadInput (regular
// file, at most limit bytes); the caller reads it and closes it. The file
// is opened without blocking on a FIFO: its type is checked before
// opening.
func OpenInput(path, what string, limit int64) (*os.File, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, fmt.Errorf("%s: cannot read %s: %v", path, what, unwrapPathError(err))
	}
	if !st.Mode().IsRegular() {
		return nil, fmt.Errorf("%s: %s is not a regular file (%s): refused", path, what, describeFileMode(st.Mode()))
	}
	if st.Size() > limit {
		return nil, fmt.Errorf("%s: %s of %d bytes is larger than %d bytes: refused", path, what, st.Size(), limit)
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("%s: cannot read %s: %v", path, what, unwrapPathError(err))
	}
	return f, nil
}

// describeFileMode names the type of a file that is not a regular one,
// for messages: "a directory", "a FIFO (named pipe)", "a device".
func describeFileMode(m os.FileMode) string {
	switch {
	case m.IsDir():
		return "a directory"
	case m&os.ModeNamedPipe != 0:
		return "a FIFO (named pipe)"
	case m&os.ModeSocket != 0:
		return "a socket"
	case m&os.ModeDevice != 0:
		return "a device"
	}
	return "a special file"
}

// unwrapPathError drops the path os.PathError repeats.
func unwrapPathError(err error) error {
	if pe, ok := err.(*os.PathError); ok {
		return pe.Err
	}
	return err
}
