package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"regexp"
	"runtime/debug"
	"strconv"

	"coilkick"
)

// Machine-readable output: one style for every command.
//
// JSON: one object per command, snake_case keys that end in the SI unit
// (pull_in_time_s, peak_current_A, winding_peak_degC, force_N), null for
// what did not happen (a time that did not come, a figure that does not
// apply), never a Go field name, never NaN or Inf. Every document starts
// with the same header (jsonHeader). CSV: a header row of such keys, then
// numbers only in the cells (an empty cell where JSON has null), true or
// false for flags; temperatures in degC where the README uses °C.

// jsonHeader opens every command's JSON document.
type jsonHeader struct {
	Version  string `json:"coilkick_version"`
	Command  string `json:"command"`
	Scenario string `json:"scenario"` // the scenario's name
	Source   string `json:"source"`   // the scenario file
}

func newHeader(command string, md *coilkick.Model, path string) jsonHeader {
	h := jsonHeader{Version: version(), Command: command, Source: path}
	if md != nil {
		h.Scenario = md.Name
	}
	return h
}

// keyPattern is the form of every JSON and CSV key: lower-case words and
// digits joined by underscores, the unit's own case kept at the end
// (_A, _V, _Hz, _degC, _ohm).
var keyPattern = regexp.MustCompile(`^[a-z][a-z0-9]*(_[a-z0-9]+)*(_(A|V|W|J|N|T|H|F|C|K|Hz|Wb|Pa|degC|ohm|s|m|m_per_s|N_per_m|A_per_s|N_s_per_m|J_per_K|K_per_W|W_per_m2_K))?$`)

// writeJSONDoc encodes doc indented, refusing a document with a number
// that is not finite (encoding/json refuses them too, with a message that
// does not say where).
func writeJSONDoc(w io.Writer, doc any) error {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	if err := enc.Encode(doc); err != nil {
		return fmt.Errorf("JSON output: %v (a figure that is not a finite number)", err)
	}
	_, err := w.Write(buf.Bytes())
	return err
}

// num formats a number for a CSV cell (10 significant digits); a
// non-finite value is an empty cell.
func num(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return ""
	}
	return strconv.FormatFloat(v, 'g', 10, 64)
}

// numPtr formats an optional number: empty when nil.
func numPtr(v *float64) string {
	if v == nil {
		return ""
	}
	return num(*v)
}

// seconds returns an Interval's seconds, or nil when it did not happen.
func seconds(iv coilkick.Interval) *float64 {
	if !iv.Happened {
		return nil
	}
	s := iv.Seconds
	return &s
}

// toDegC converts K to °C.
func toDegC(k float64) float64 { return k - 273.15 }

// optional returns &v, or nil when ok is false.
func optional(v float64, ok bool) *float64 {
	if !ok {
		return nil
	}
	return &v
}

// writeCSVRows writes a header and rows.
func writeCSVRows(w io.Writer, header []string, rows [][]string) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(header); err != nil {
		return err
	}
	for _, r := range rows {
		if err := cw.Write(r); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// version is the module's version from the build information ("(devel)"
// for a build from a work tree), with the VCS revision when known.
func version() string {
	bi, ok := debug.ReadBuildInfo()
	if !ok {
		return "unknown"
	}
	// Since Go 1.24 a build from a git clone stamps a pseudo-version with
	// the commit (and +dirty); the revision is added only where it did not
	// (a build with -buildvcs=false keeps "(devel)").
	v := bi.Main.Version
	if v != "" && v != "(devel)" {
		return v
	}
	v = "(devel)"
	for _, s := range bi.Settings {
		if s.Key == "vcs.revision" && len(s.Value) >= 12 {
			v += " " + s.Value[:12]
		}
		if s.Key == "vcs.modified" && s.Value == "true" {
			v += "+modified"
		}
	}
	return v
}
