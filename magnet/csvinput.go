package magnet

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
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
)

// InputError is an error in a CSV input file (a flux-linkage table, a B–H
// curve) at a line and column (1-based; 0 when not known). Column counts
// bytes from the start of the line, as encoding/csv does.
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

// csvInput reads the records of a CSV input: '#' starts a comment line,
// the number of cells may vary from row to row, leading spaces of cells
// are dropped, and a UTF-8 byte-order mark at the start of the file is
// skipped (spreadsheet programs write one, and the YAML reader accepts it
// too).
type csvInput struct {
	cr   *csv.Reader
	name string
}

var utf8BOM = []byte{0xEF, 0xBB, 0xBF}

func newCSVInput(r io.Reader, name string) *csvInput {
	br := bufio.NewReader(r)
	if b, err := br.Peek(len(utf8BOM)); err == nil && string(b) == string(utf8BOM) {
		br.Discard(len(utf8BOM))
	}
	cr := csv.NewReader(br)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	return &csvInput{cr: cr, name: name}
}

// next reads the next record and the line it starts on; io.EOF at the end.
// Syntax errors are *InputError with the line and column.
func (in *csvInput) next() (rec []string, line int, err error) {
	rec, err = in.cr.Read()
	if err == io.EOF {
		return nil, 0, err
	}
	if err != nil {
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			return nil, 0, inputErr(in.name, pe.Line, pe.Column, "not valid CSV: %v", pe.Err)
		}
		return nil, 0, inputErr(in.name, 0, 0, "%v", err)
	}
	line, _ = in.cr.FieldPos(0)
	return rec, line, nil
}

// column returns the column where cell k of the last record starts.
func (in *csvInput) column(k int) int {
	_, col := in.cr.FieldPos(k)
	return col
}

// csvScale is a scale of a CSV input: the SI value of one file unit of
// the quantity what.
type csvScale struct {
	what string
	v    float64
}

// checkScales returns an *InputError for the first scale that is not
// positive and finite.
func checkScales(name string, scales ...csvScale) error {
	for _, sc := range scales {
		if !(sc.v > 0) || math.IsInf(sc.v, 0) {
			return inputErr(name, 0, 0, "%s scale must be positive and finite, got %g", sc.what, sc.v)
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
// by scale; an error names the cell as what: "current (cell 1): ...".
func (in *csvInput) value(rec []string, p recordPos, k int, scale float64, what string) (float64, error) {
	v, err := parseCell(rec[k])
	if err != nil {
		return 0, p.errAt(in.name, k, what+": "+err.Error())
	}
	return v * scale, nil
}
