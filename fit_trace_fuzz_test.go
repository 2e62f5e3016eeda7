package coilkick

import (
	"bytes"
	"errors"
	"math"
	"regexp"
	"strings"
	"testing"
	"unicode"
)

// traceErrRE is the shape of every reader error: the file, a line number,
// then the message.
var traceErrRE = regexp.MustCompile(`^fuzz\.csv:[1-9][0-9]*: \S`)

// FuzzReadTrace feeds arbitrary bytes to the trace reader, and what it
// accepts to the event detector. Neither may panic or hang; an error names
// the file and the line and carries no raw control character (cells are
// quoted); an accepted trace holds at least 10 and at most MaxTraceSamples
// finite samples within the reader's bounds, in strictly increasing time,
// with a voltage for every sample or none; the events found are finite.
// The seed corpus (testdata/fuzz/FuzzReadTrace) has good and bad headers,
// a byte-order mark, units, duplicate columns, NaN and infinite cells,
// quotes, CRLF line ends, gaps and a current pulse with a pull-in dip.
func FuzzReadTrace(f *testing.F) {
	f.Add([]byte("time (ms), current (mA)\n0,0\n1,1\n2,2\n3,3\n4,4\n5,5\n6,6\n7,7\n8,8\n9,9\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		tr, err := ReadTraceCSV(bytes.NewReader(data), "fuzz.csv")
		if err != nil {
			msg := err.Error()
			if !traceErrRE.MatchString(msg) {
				t.Fatalf("error without file and line: %q", msg)
			}
			if strings.IndexFunc(msg, func(r rune) bool { return unicode.IsControl(r) }) >= 0 {
				t.Fatalf("raw control character in the error %q", msg)
			}
			return
		}
		n := len(tr.Time)
		if n < 10 || n > MaxTraceSamples || len(tr.Current) != n || (tr.Voltage != nil && len(tr.Voltage) != n) {
			t.Fatalf("accepted %d times, %d currents, %d voltages", n, len(tr.Current), len(tr.Voltage))
		}
		for k := 0; k < n; k++ {
			if !(math.Abs(tr.Time[k]) <= maxTraceTime) || !(math.Abs(tr.Current[k]) <= maxTraceCurrent) ||
				(tr.Voltage != nil && !(math.Abs(tr.Voltage[k]) <= maxTraceVoltage)) {
				t.Fatalf("sample %d out of bounds: %g s, %g A", k, tr.Time[k], tr.Current[k])
			}
			if k > 0 && !(tr.Time[k] > tr.Time[k-1]) {
				t.Fatalf("time does not increase at sample %d", k)
			}
		}
		if tr.HeaderLine < 1 || len(tr.Columns) < 2 {
			t.Fatalf("header line %d, columns %v", tr.HeaderLine, tr.Columns)
		}
		ev, err := DetectEvents(tr)
		if err != nil {
			if !errors.Is(err, ErrNoCurrent) {
				t.Fatalf("DetectEvents: %v", err)
			}
			return
		}
		for _, v := range []float64{ev.Step, ev.Offset, ev.Noise, ev.Energize, ev.EnergizeErr, ev.Peak, ev.PeakI,
			ev.Seat, ev.SeatI, ev.SeatErr, ev.TurnOff, ev.DecayEnd, ev.DecayEndErr} {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("DetectEvents: a non-finite figure in %+v", ev)
			}
		}
	})
}
