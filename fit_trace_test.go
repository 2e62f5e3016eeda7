package coilkick

import (
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestReadTraceBadFiles: every hostile trace under testdata/fit/bad is
// refused with an error that names the file, the line, the column (with
// its header cell) and the expected quantity or unit. The files carry a
// comment saying what is wrong with them.
func TestReadTraceBadFiles(t *testing.T) {
	t.Parallel()
	cases := []struct {
		file string
		want []string // each must appear in the error
	}{
		{"nan-current.csv", []string{"nan-current.csv:6:", `column 2 "current (mA)"`, `"NaN" is not a finite number`, "expected a current in mA"}},
		{"inf-time.csv", []string{"inf-time.csv:5:", `column 1 "time (ms)"`, `"Inf" is not a finite number`, "expected a time in ms"}},
		{"text-cell.csv", []string{"text-cell.csv:8:", `column 2 "current (mA)"`, `"high"`, "expected a current in mA"}},
		{"empty-cell.csv", []string{"empty-cell.csv:4:", `column 2 "current (mA)"`, `""`, "expected a current in mA"}},
		{"duplicate-current.csv", []string{"duplicate-current.csv:2:", `column 3 "current (A)"`, "second current column", "column 2"}},
		{"duplicate-time.csv", []string{"duplicate-time.csv:2:", `column 3 "t (s)"`, "second time column", "column 1"}},
		{"wrong-dimension.csv", []string{"wrong-dimension.csv:2:", `column 2 "current (mV)"`, `unit "mV" is a voltage`, "expected a current", `"current (A)"`}},
		{"unknown-unit.csv", []string{"unknown-unit.csv:2:", `column 2 "current (mQ)"`, `unknown unit "mQ"`, "expected a current"}},
		{"no-unit.csv", []string{"no-unit.csv:2:", `column 2 "current"`, "has no unit", "expected a current", `"current (A)"`}},
		{"unknown-column.csv", []string{"unknown-column.csv:2:", `column 3 "flux (Wb)"`, "unknown quantity", `"current (mA)"`}},
		{"no-current.csv", []string{"no-current.csv:2:", "no current column", `"time (ms), current (mA)"`}},
		{"bad-header.csv", []string{"bad-header.csv:2:", `column 2 "42"`, "a name and a unit", `"current (mA)"`}},
		{"short-row.csv", []string{"short-row.csv:7:", "1 cell", "no cell for column 2", "time in ms, current in mA"}},
		{"long-row.csv", []string{"long-row.csv:7:", "3 cells", "column 3 has no header", "time in ms, current in mA"}},
		{"bare-quote.csv", []string{"bare-quote.csv:6:", `column 2 "current (mA)"`, "not a finite number", "expected a current in mA"}},
		{"time-back.csv", []string{"time-back.csv:9:", `column 1 "time (ms)"`, "0.1 ms does not increase", "line 8", "0.25 ms"}},
		{"gap.csv", []string{"gap.csv:12:", `column 1 "time (ms)"`, "a gap of 4.6 ms", "median step 0.05 ms"}},
		{"huge-current.csv", []string{"huge-current.csv:5:", `column 2 "current (mA)"`, `"1e300" mA is beyond the ±1e6 A`, "expected a current in mA"}},
		{"too-few.csv", []string{"too-few.csv:5:", "only 3 samples", "at least 10", "time in ms, current in mA"}},
		{"header-only.csv", []string{"header-only.csv:2:", "only 0 samples", "time in ms, current in mA"}},
		{"control-chars.csv", []string{"control-chars.csv:2:", `column 2 "current (\x1b[31mmA)"`, "expected a current"}},
		{"empty.csv", []string{"empty.csv:1:", "empty", `"time (ms), current (mA)"`}},
		{"comments-only.csv", []string{"comments-only.csv:1:", "empty", `"time (ms), current (mA)"`}},
	}
	seen := map[string]bool{"time-us.csv": true, "current-A.csv": true} // these read; the fit fails on them
	for _, c := range cases {
		seen[c.file] = true
		path := filepath.Join("testdata", "fit", "bad", c.file)
		_, err := LoadTrace(path)
		if err == nil {
			t.Errorf("%s: read without error", c.file)
			continue
		}
		msg := err.Error()
		for _, w := range append(c.want, path) {
			if !strings.Contains(msg, w) {
				t.Errorf("%s: error %q lacks %q", c.file, msg, w)
			}
		}
		if strings.ContainsAny(msg, "\x1b\r\n") {
			t.Errorf("%s: raw control characters in the error %q", c.file, msg)
		}
	}
	entries, err := os.ReadDir(filepath.Join("testdata", "fit", "bad"))
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		if !seen[e.Name()] {
			t.Errorf("testdata/fit/bad/%s has no case in this test", e.Name())
		}
	}
}

// TestReadTraceErrors: errors made by one edit of a good trace in memory,
// each naming the file line (not the row number: comments count).
func TestReadTraceErrors(t *testing.T) {
	t.Parallel()
	good := "time (ms), current (mA)\n"
	for k := 0; k < 20; k++ {
		good += fmt.Sprintf("%d, %d\n", k, k*10)
	}
	cases := []struct{ text, want string }{
		{"time (ms)\n1\n2\n", "scope.csv:1: no current column"},
		{"time (ms), current (mA)\n0, 1\n1, x\n", `scope.csv:3: column 2 "current (mA)": "x" is not a finite number; expected a current in mA`},
		{"# a comment line\ntime (ms), current (mA)\n0, 1\n1, x\n", `scope.csv:4: column 2 "current (mA)"`}, // the file's own line
		{strings.Replace(good, "5, 50", "3.5, 50", 1), `scope.csv:7: column 1 "time (ms)": time 3.5 ms does not increase`},
		{strings.Replace(good, "5, 50", "500, 50", 1), `scope.csv:8: column 1 "time (ms)": time 6 ms does not increase (the previous sample, line 7, is at 500 ms)`},
		{strings.Replace(good, "19, 190", "190, 190", 1), `scope.csv:21: column 1 "time (ms)": a gap of 172 ms`},
		{"time (ms), current (mV)\n0,1\n", `scope.csv:1: column 2 "current (mV)": unit "mV" is a voltage`},
		{"time, current (A)\n0,1\n", `scope.csv:1: column 1 "time" has no unit; expected a time`},
		{"", "scope.csv:1: the trace is empty"},
		{"time (s), current (A)\n0, 1\n1, 2\n", "scope.csv:3: only 2 samples"},
		{"time (ms), current (mA), voltage (V)\n0, 1, 1e7\n", `scope.csv:2: column 3 "voltage (V)": "1e7" V is beyond the ±1e6 V`},
		{"time (Gs), current (mA)\n1e300, 1\n", `scope.csv:2: column 1 "time (Gs)": "1e300" Gs is beyond the ±1e10 s`},
		{"time (ms), current (mA)\n0, 1e400\n", `scope.csv:2: column 2 "current (mA)": "1e400" is not a finite number`},
		{"time (ms), current (\"mA\n0, 1\n", `scope.csv:1: column 2`},
		{"time (ms), voltage (V), v (V), current (A)\n", `scope.csv:1: column 3 "v (V)": a second voltage column (the first is column 2)`},
		{"time (ms)" + strings.Repeat(", gap_m", 100) + ", current (mA)\n", "scope.csv:1: the header has 102 columns; a trace has at most 100"},
		{"time (ms), current (" + strings.Repeat("m", 99) + "A)\n", `scope.csv:1: column 2 "current (mmmmmmmmmmmmmmmmmmmmmmmmmmmmmmm"…: a header cell of 110 bytes`},
	}
	for _, c := range cases {
		_, err := ReadTraceCSV(strings.NewReader(c.text), "scope.csv")
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("trace %q: error %v, want one containing %q", c.text[:min(len(c.text), 40)], err, c.want)
		}
	}
	tr, err := ReadTraceCSV(strings.NewReader(good), "scope.csv")
	if err != nil || len(tr.Time) != 20 || tr.Current[3] != 0.03 || tr.Time[3] != 0.003 || !tr.Uniform() {
		t.Errorf("good trace: %v %+v", err, tr)
	}
	if tr.HeaderLine != 1 || len(tr.Columns) != 2 || tr.Columns[1].String() != `column 2 "current (mA)"` || tr.Columns[1].Unit != "mA" {
		t.Errorf("good trace: header line %d, columns %+v", tr.HeaderLine, tr.Columns)
	}
}

// TestReadTraceLongHeaderCell: a header cell of a megabyte is refused at
// once. FuzzReadTrace found it: the unit parser's work grows with the
// square of a unit's length, and such a cell took over a minute.
func TestReadTraceLongHeaderCell(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		n    int
		want string
	}{
		{60 << 10, `long.csv:1: column 2 "current (mmm`},
		// a line above magnet.MaxCSVLineBytes is refused before its cells are split
		{1 << 20, "long.csv:1: a line longer than 65536 bytes"},
	} {
		text := "time (ms), current (" + strings.Repeat("m", c.n) + "A)\n0, 1\n"
		start := time.Now()
		_, err := ReadTraceCSV(strings.NewReader(text), "long.csv")
		if d := time.Since(start); err == nil || !strings.Contains(err.Error(), c.want) || d > 2*time.Second {
			t.Errorf("a %d-byte header cell: error %.80v after %v, want %q", c.n, err, d, c.want)
		}
	}
}

// TestReadTraceBOM: a UTF-8 byte-order mark at the start of the file (as
// some spreadsheet programs write it) is skipped, before a header or
// before a comment. Before, it became part of the first header cell:
// "column 1 "\ufefftime (ms)": expected a name and a unit".
func TestReadTraceBOM(t *testing.T) {
	t.Parallel()
	body := "time (ms), current (mA)\n"
	for k := 0; k < 12; k++ {
		body += fmt.Sprintf("%d, %d\n", k, k)
	}
	for _, text := range []string{"\uFEFF" + body, "\uFEFF# scope export\n" + body} {
		tr, err := ReadTraceCSV(strings.NewReader(text), "bom.csv")
		if err != nil || len(tr.Time) != 12 || tr.Columns[0].Header != "time (ms)" {
			t.Errorf("trace with a BOM: %v", err)
		}
	}
	// Only at the start: a BOM in a later cell is a bad cell.
	if _, err := ReadTraceCSV(strings.NewReader(body+"\uFEFF12, 12\n"), "bom.csv"); err == nil || !strings.Contains(err.Error(), `bom.csv:14: column 1 "time (ms)"`) {
		t.Errorf("BOM inside the file: error %v", err)
	}
	// The committed BOM file reads to the same samples as every second
	// sample of the demo trace it was made from.
	bom, err := LoadTrace(filepath.Join("testdata", "fit", "bom-scope.csv"))
	if err != nil {
		t.Fatal(err)
	}
	orig, err := LoadTrace(scopePath)
	if err != nil {
		t.Fatal(err)
	}
	if len(bom.Time) != (len(orig.Time)+1)/2 {
		t.Fatalf("BOM trace has %d samples, the original %d", len(bom.Time), len(orig.Time))
	}
	for k := range bom.Time {
		if bom.Time[k] != orig.Time[2*k] || bom.Current[k] != orig.Current[2*k] {
			t.Fatalf("sample %d differs", k)
		}
	}
}

// rowsReader produces a trace of n rows without holding it in memory.
type rowsReader struct {
	header string
	n, k   int
	row    func(k int) string
	buf    []byte
}

func (r *rowsReader) Read(p []byte) (int, error) {
	for len(r.buf) == 0 {
		switch {
		case r.header != "":
			r.buf, r.header = []byte(r.header), ""
		case r.k < r.n:
			r.buf = []byte(r.row(r.k))
			r.k++
		default:
			return 0, io.EOF
		}
	}
	n := copy(p, r.buf)
	r.buf = r.buf[n:]
	return n, nil
}

// TestReadTraceLimits: more than MaxTraceSamples samples, or more than
// MaxTableBytes bytes from a reader (a file is refused by its size before
// reading: TestLoadTraceRefuses), is an error naming the line, not an
// unbounded read.
func TestReadTraceLimits(t *testing.T) {
	t.Parallel()
	many := &rowsReader{header: "t (us), i (mA)\n", n: MaxTraceSamples + 5, row: func(k int) string { return fmt.Sprintf("%d,1\n", k) }}
	_, err := ReadTraceCSV(many, "long.csv")
	want := fmt.Sprintf("long.csv:%d: more than %d samples: decimate", MaxTraceSamples+2, MaxTraceSamples)
	if err == nil || !strings.Contains(err.Error(), want) {
		t.Errorf("%d samples: error %v, want %q", MaxTraceSamples+5, err, want)
	}
	// Exactly the limit reads.
	exact := &rowsReader{header: "t (us), i (mA)\n", n: MaxTraceSamples, row: func(k int) string { return fmt.Sprintf("%d,1\n", k) }}
	if tr, err := ReadTraceCSV(exact, "exact.csv"); err != nil || len(tr.Time) != MaxTraceSamples {
		t.Errorf("%d samples: %v", MaxTraceSamples, err)
	}
	// Past MaxTableBytes (long comment lines, so that the sample limit
	// does not come first).
	line := "#" + strings.Repeat("x", 1<<16-2) + "\n"
	big := &rowsReader{header: "t (us), i (mA)\n", n: MaxTableBytes/len(line) + 2, row: func(int) string { return line }}
	_, err = ReadTraceCSV(big, "big.csv")
	if err == nil || !strings.Contains(err.Error(), "big.csv:") || !strings.Contains(err.Error(), fmt.Sprintf("larger than %d bytes", MaxTableBytes)) {
		t.Errorf("trace above %d bytes: error %v", MaxTableBytes, err)
	}
}

// TestLoadTraceRefuses: a trace that is not a regular file (a FIFO, which
// would block the open; a device such as /dev/zero, which never ends; a
// directory) or that is larger than MaxTableBytes is refused before it is
// read, with the file named.
func TestLoadTraceRefuses(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	fifo := filepath.Join(dir, "scope.fifo")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Fatal(err)
	}
	big := filepath.Join(dir, "big.csv")
	if err := os.WriteFile(big, []byte("time (ms), current (mA)\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Truncate(big, MaxTableBytes+1); err != nil { // sparse
		t.Fatal(err)
	}
	cases := []struct{ path, want string }{
		{fifo, "is not a regular file"},
		{"/dev/zero", "is not a regular file"},
		{dir, "is not a regular file"},
		{big, fmt.Sprintf("larger than %d bytes", MaxTableBytes)},
		{filepath.Join(dir, "missing.csv"), "no such file"},
	}
	for _, c := range cases {
		done := make(chan error, 1)
		go func() { _, err := LoadTrace(c.path); done <- err }()
		select {
		case err := <-done:
			if err == nil || !strings.Contains(err.Error(), c.path) || !strings.Contains(err.Error(), c.want) {
				t.Errorf("LoadTrace(%s): error %v, want one naming the file and saying %q", c.path, err, c.want)
			}
		case <-time.After(10 * time.Second):
			t.Errorf("LoadTrace(%s) did not return within 10 s", c.path)
			if c.path == fifo { // unblock the open
				if w, err := os.OpenFile(fifo, os.O_WRONLY, 0); err == nil {
					w.Close()
				}
			}
		}
	}
}

// TestResampleMovingAverage: the running-sum moving average equals the
// direct sum over each (cut) window.
func TestResampleMovingAverage(t *testing.T) {
	t.Parallel()
	tr := &MeasuredTrace{}
	for k := 0; k < 50; k++ {
		tr.Time = append(tr.Time, float64(k))
		tr.Current = append(tr.Current, float64((k*37)%11))
	}
	for _, w := range []int{1, 3, 7, 51, 99} {
		_, raw := tr.Resample(1, 1)
		_, got := tr.Resample(1, w)
		for j := range got {
			lo, hi := max(0, j-w/2), min(len(raw)-1, j+w/2)
			s := 0.0
			for m := lo; m <= hi; m++ {
				s += raw[m]
			}
			if want := s / float64(hi-lo+1); !(math.Abs(got[j]-want) <= 1e-12) {
				t.Fatalf("window %d, sample %d: %g, want %g", w, j, got[j], want)
			}
		}
	}
}
