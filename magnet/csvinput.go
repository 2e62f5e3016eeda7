package magnet

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"unicode/utf8"
)

// Size limits of the CSV inputs, so that a hostile or mistaken file is a
// clear error rather than minutes of set-up or gigabytes of memory. Field
// solvers and bench sweeps give tens to a hundred currents and gaps, and
// measured B–H curves tens to hundreds of points (common practice, no
// source).
const (
	MaxTableCurrents = 500   // current rows of a flux-linkage table
	MaxTableGaps     = 500   // gap columns of a flux-linkage table
	MaxBHPoints      = 10000 // points of a B–H curve
	// MaxCSVLineBytes bounds a line of a CSV input: the longest row of a
	// table (500 gaps of 25 characters) has about 13 KB, and a line of 60
	// MB of one-character cells made encoding/csv hold 2.4 GB of cells
	// and positions before the reader could count them.
	MaxCSVLineBytes = 64 << 10
)

// LineTooLongError is the error of CSVReader.Read at a line longer than
// MaxCSVLineBytes (Line, from 1).
type LineTooLongError struct{ Line int }

func (e *LineTooLongError) Error() string {
	return fmt.Sprintf("a line longer than %d bytes (64 KiB): not a row of a table, curve or trace", MaxCSVLineBytes)
}

// InputError is an error in a CSV input file (a flux-linkage table, a B–H
// curve) at a line and column (1-based; 0 when not known). Column counts
// characters (runes) from the start of the line, so that a cell after a
// "µ" or "Ω" is where an editor shows it.
type InputError struct {
	File         string
	Line, Column int
	Msg          string
}

// Error is "magnet: file:line:column: message".
func (e *InputError) Error() string { return "magnet: " + e.Detail() }

// Detail is the error without the package prefix, "file:line:column:
// message", for callers that say themselves where it comes from.
func (e *InputError) Detail() string {
	switch {
	case e.Line > 0 && e.Column > 0:
		return fmt.Sprintf("%s:%d:%d: %s", e.File, e.Line, e.Column, e.Msg)
	case e.Line > 0:
		return fmt.Sprintf("%s:%d: %s", e.File, e.Line, e.Msg)
	}
	return fmt.Sprintf("%s: %s", e.File, e.Msg)
}

func inputErr(file string, line, col int, format string, args ...any) *InputError {
	return &InputError{File: file, Line: line, Column: col, Msg: fmt.Sprintf(format, args...)}
}

// Unit is the unit a CSV input gives a quantity in: its name as written
// ("mm", "mWb") and the SI value of one unit (1e-3). The readers multiply
// each cell by Scale, and their messages quote values in Name.
type Unit struct {
	Name  string
	Scale float64
}

// Format returns the SI value v in the unit: the shortest decimal that
// the readers turn back into v (the cell as written, but for its
// spelling: "0.50" and "5e-1" read as 0.5), then the name: "0.5 mm".
func (u Unit) Format(v float64) string {
	return u.number(v) + " " + u.Name
}

// number is Format without the name.
func (u Unit) number(v float64) string {
	x := v / u.Scale
	for prec := 1; prec <= 17 && isFinite(v); prec++ {
		s := strconv.FormatFloat(x, 'g', prec, 64)
		if y, err := strconv.ParseFloat(s, 64); err == nil && y*u.Scale == v {
			return strconv.FormatFloat(y, 'g', -1, 64) // "200", not "2e+02"
		}
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// Approx returns a computed SI value v in the unit to 4 significant
// digits: "0.3125 mm".
func (u Unit) Approx(v float64) string {
	return strconv.FormatFloat(v/u.Scale, 'g', 4, 64) + " " + u.Name
}

// WithSI returns Format(v), followed by the value in the SI unit si when
// the unit is another one: "200000 mm (200 m)", for messages on a value
// beyond an SI bound.
func (u Unit) WithSI(v float64, si string) string {
	if u.Scale == 1 && u.Name == si {
		return u.Format(v)
	}
	return fmt.Sprintf("%s (%g %s)", u.Format(v), v, si)
}

// CSVReader reads the records of a CSV input: '#' starts a comment line,
// the number of cells may vary from row to row, leading spaces of cells
// are dropped, and a UTF-8 byte-order mark at the start of the file is
// skipped (spreadsheet programs write one, and the YAML reader accepts it
// too). Unlike encoding/csv, which counts columns in bytes, it gives
// columns in characters (runes) from 1: a cell after a "µ" in the same
// line is where an editor shows it. CSV is the underlying reader, for its
// options (LazyQuotes, ReuseRecord).
type CSVReader struct {
	CSV   *csv.Reader
	lines *lineTee
}

var utf8BOM = []byte{0xEF, 0xBB, 0xBF}

// NewCSVReader returns a reader of r. A line longer than MaxCSVLineBytes
// ends the reading with a *LineTooLongError.
func NewCSVReader(r io.Reader) *CSVReader {
	br := bufio.NewReader(r)
	if b, err := br.Peek(len(utf8BOM)); err == nil && bytes.Equal(b, utf8BOM) {
		br.Discard(len(utf8BOM))
	}
	lines := &lineTee{r: br, base: 1, starts: []int{0}}
	cr := csv.NewReader(lines)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	return &CSVReader{CSV: cr, lines: lines}
}

// Read returns the next record and the line it starts on; io.EOF at the
// end. A syntax error is the *csv.ParseError with its Column (and the
// column of nothing else) in characters.
func (c *CSVReader) Read() (rec []string, line int, err error) {
	rec, err = c.CSV.Read()
	if err == io.EOF {
		return nil, 0, err
	}
	if err != nil {
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			pe.Column = c.lines.runeColumn(pe.Line, pe.Column)
		}
		return nil, 0, err
	}
	line, _ = c.CSV.FieldPos(0)
	c.lines.forget(line)
	return rec, line, nil
}

// Column returns the column (characters from 1) where cell k of the last
// record starts.
func (c *CSVReader) Column(k int) int {
	line, col := c.CSV.FieldPos(k)
	return c.lines.runeColumn(line, col)
}

// lineTee passes the bytes of r on and keeps those of the lines from the
// last record's on, so that a byte column can be counted in runes.
type lineTee struct {
	r      io.Reader
	buf    []byte // bytes read, from the start of line base
	base   int    // the line buf starts with (1-based)
	starts []int  // offsets in buf of the starts of lines base, base+1, …
}

func (t *lineTee) Read(p []byte) (int, error) {
	n, err := t.r.Read(p)
	off := len(t.buf)
	t.buf = append(t.buf, p[:n]...)
	for i := 0; i < n; {
		j := bytes.IndexByte(p[i:n], '\n')
		if j < 0 {
			break
		}
		i += j + 1
		if off+i-t.starts[len(t.starts)-1] > MaxCSVLineBytes {
			return n, &LineTooLongError{Line: t.base + len(t.starts) - 1}
		}
		t.starts = append(t.starts, off+i)
	}
	if len(t.buf)-t.starts[len(t.starts)-1] > MaxCSVLineBytes {
		return n, &LineTooLongError{Line: t.base + len(t.starts) - 1}
	}
	return n, err
}

// forget drops the lines before line once they hold more than 64 KiB or
// 1024 lines (so that dropping costs little per record).
func (t *lineTee) forget(line int) {
	k := line - t.base
	if k <= 0 || k >= len(t.starts) || (t.starts[k] < 64<<10 && k < 1024) {
		return
	}
	off := t.starts[k]
	t.buf = t.buf[:copy(t.buf, t.buf[off:])]
	t.starts = t.starts[:copy(t.starts, t.starts[k:])]
	for i := range t.starts {
		t.starts[i] -= off
	}
	t.base = line
}

// runeColumn returns byte column col (1-based) of line as a column in
// runes; col itself when the line is no longer kept.
func (t *lineTee) runeColumn(line, col int) int {
	k := line - t.base
	if k < 0 || k >= len(t.starts) || col < 1 {
		return col
	}
	text := t.buf[t.starts[k]:]
	if k+1 < len(t.starts) {
		text = t.buf[t.starts[k]:t.starts[k+1]]
	}
	if col-1 > len(text) {
		return col
	}
	return utf8.RuneCount(text[:col-1]) + 1
}

// csvInput reads the records of a magnet CSV input (CSVReader) and turns
// its errors into *InputError naming the file.
type csvInput struct {
	rd   *CSVReader
	name string
}

func newCSVInput(r io.Reader, name string) *csvInput {
	return &csvInput{rd: NewCSVReader(r), name: name}
}

// next reads the next record and the line it starts on; io.EOF at the end.
// Syntax errors are *InputError with the line and column.
func (in *csvInput) next() (rec []string, line int, err error) {
	rec, line, err = in.rd.Read()
	if err == io.EOF {
		return nil, 0, err
	}
	if err != nil {
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			return nil, 0, inputErr(in.name, pe.Line, pe.Column, "not valid CSV: %v", pe.Err)
		}
		var le *LineTooLongError
		if errors.As(err, &le) {
			return nil, 0, inputErr(in.name, le.Line, 0, "%v", err)
		}
		return nil, 0, inputErr(in.name, 0, 0, "%v", err)
	}
	return rec, line, nil
}

// column returns the column (characters) where cell k of the last record
// starts.
func (in *csvInput) column(k int) int { return in.rd.Column(k) }

// checkScales returns an *InputError for the first unit whose scale is not
// positive and finite; what names the quantities in order.
func checkScales(name string, what []string, units ...Unit) error {
	for k, u := range units {
		if !(u.Scale > 0) || math.IsInf(u.Scale, 0) {
			return inputErr(name, 0, 0, "%s scale must be positive and finite, got %g", what[k], u.Scale)
		}
	}
	return nil
}

// recordPos is where a record was read: its line and the column of each
// cell, so that an error found after reading points at the cell.
type recordPos struct {
	line int
	cols []int
}

// pos returns the position of the last record read (n cells, at line).
func (in *csvInput) pos(line, n int) recordPos {
	p := recordPos{line: line, cols: make([]int, n)}
	for k := range p.cols {
		p.cols[k] = in.column(k)
	}
	return p
}

// errAt returns an *InputError in file at cell k of the record (column 0
// for a cell outside it).
func (p recordPos) errAt(file string, k int, msg string) *InputError {
	col := 0
	if k >= 0 && k < len(p.cols) {
		col = p.cols[k]
	}
	return inputErr(file, p.line, col, "%s", msg)
}

// value parses cell k of a record read at p (parseCell) and multiplies it
// by the unit's scale; an error names the cell as what: "current (cell
// 1): ...".
func (in *csvInput) value(rec []string, p recordPos, k int, u Unit, what string) (float64, error) {
	v, err := parseCell(rec[k])
	if err != nil {
		return 0, p.errAt(in.name, k, what+": "+err.Error())
	}
	return v * u.Scale, nil
}
