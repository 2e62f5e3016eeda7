package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"encoding/xml"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"testing"

	"golang.org/x/net/html"

	"coilkick"
	"coilkick/cmd/coilkick/plot"
)

func demos(t *testing.T) []string {
	t.Helper()
	files, err := filepath.Glob("../../scenarios/*.yaml")
	if err != nil || len(files) == 0 {
		t.Fatalf("no demo scenarios: %v", err)
	}
	return files
}

// runCLI runs the command line and returns its exit status and output.
func runCLI(args ...string) (int, string, string) {
	var out, errb bytes.Buffer
	code := run(&out, &errb, append([]string{"coilkick"}, args...))
	return code, out.String(), errb.String()
}

// TestRunOutputsEveryDemo opens the files "run --json --csv --plot
// x.svg" writes for each demo (README, "run" and "run --plot"): the SVG
// is well-formed XML of the waveform's size, titled with the scenario's
// name, with a legend entry for every trace and the energize and
// de-energize markers; the CSV has the documented header, finite cells,
// and one row per accepted integrator step and one on each side of every
// event (the solver counts of --json), from 0 to timing.end. A PNG decodes
// at the waveform's pixel size; another extension is refused.
func TestRunOutputsEveryDemo(t *testing.T) {
	t.Parallel()
	for _, f := range demos(t) {
		t.Run(filepath.Base(f), func(t *testing.T) {
			t.Parallel()
			d := demoOutputs(t, f)
			var doc struct {
				Scenario string     `json:"scenario"`
				Solver   jsonSolver `json:"solver"`
			}
			if err := json.Unmarshal(d.read(t, d.json), &doc); err != nil {
				t.Fatal(err)
			}
			checkWaveformSVG(t, d.read(t, d.svg), doc.Scenario)
			sc, err := coilkick.Load(f)
			if err != nil {
				t.Fatal(err)
			}
			checkRunCSV(t, d.read(t, d.csv), doc.Solver, sc.Timing.End)
		})
	}
	t.Run("PNG", func(t *testing.T) {
		t.Parallel()
		pngFile := filepath.Join(t.TempDir(), "w.png")
		if code, _, stderr := runCLI("run", "../../scenarios/irrigation-valve.yaml", "--plot", pngFile); code != exitOK {
			t.Fatalf("run --plot png: exit %d: %s", code, stderr)
		}
		pf, err := os.Open(pngFile)
		if err != nil {
			t.Fatal(err)
		}
		defer pf.Close()
		w, h := (&plot.Figure{Width: plot.WaveformWidth, Height: plot.WaveformHeight}).PixelSize()
		img, err := png.Decode(pf)
		if err != nil {
			t.Fatalf("PNG does not decode: %v", err)
		}
		if b := img.Bounds(); b.Dx() != w || b.Dy() != h {
			t.Errorf("PNG is %dx%d, want %dx%d", b.Dx(), b.Dy(), w, h)
		}
	})
	t.Run("PDF refused", func(t *testing.T) {
		t.Parallel()
		if code, _, stderr := runCLI("run", "../../scenarios/irrigation-valve.yaml", "--plot", filepath.Join(t.TempDir(), "x.pdf")); code != exitError ||
			!strings.Contains(stderr, ".png or .svg") {
			t.Errorf("--plot x.pdf: exit %d, %q; want an error naming the formats", code, stderr)
		}
	})
}

// svgFile is an SVG document's size (its width and height attributes, in
// pt) and the texts of its text elements in order.
type svgFile struct {
	width, height string
	texts         []string
}

// parseSVG reads an SVG document with encoding/xml; malformed XML fails
// the test.
func parseSVG(t *testing.T, b []byte) svgFile {
	t.Helper()
	var f svgFile
	d := xml.NewDecoder(bytes.NewReader(b))
	var text *strings.Builder
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG is not well-formed XML: %v", err)
		}
		switch e := tok.(type) {
		case xml.StartElement:
			switch e.Name.Local {
			case "svg":
				for _, a := range e.Attr {
					switch a.Name.Local {
					case "width":
						f.width = a.Value
					case "height":
						f.height = a.Value
					}
				}
			case "text":
				text = &strings.Builder{}
			}
		case xml.CharData:
			if text != nil {
				text.Write(e)
			}
		case xml.EndElement:
			if e.Name.Local == "text" && text != nil {
				f.texts = append(f.texts, text.String())
				text = nil
			}
		}
	}
	return f
}

// checkWaveformSVG checks a waveform SVG: its size is the waveform's
// (plot.WaveformWidth × WaveformHeight, in pt), its first text the title
// (the scenario's name), and it names every trace of the README's panels
// and the energize and de-energize markers.
func checkWaveformSVG(t *testing.T, b []byte, title string) {
	t.Helper()
	f := parseSVG(t, b)
	pt := func(s string) float64 {
		v, err := strconv.ParseFloat(strings.TrimSuffix(s, "pt"), 64)
		if err != nil || !strings.HasSuffix(s, "pt") {
			t.Errorf("SVG size %q is not in pt", s)
		}
		return v
	}
	if w, h := float64(plot.WaveformWidth), float64(plot.WaveformHeight); math.Abs(pt(f.width)-w) > 1e-9*w || math.Abs(pt(f.height)-h) > 1e-9*h {
		t.Errorf("SVG is %s × %s, want %g pt × %g pt", f.width, f.height, w, h)
	}
	if len(f.texts) == 0 || f.texts[0] != title {
		t.Fatalf("SVG's first text %q, want the title %q", f.texts, title)
	}
	on, off := "energize", "de-energize"
	if strings.Contains(strings.Join(f.texts, "\n"), "H-bridge pulses") {
		on, off = "latch pulse", "latch ends"
	}
	for _, want := range []string{"coil current", "coil voltage", "switch voltage (drain to ground)", "working air gap",
		"magnetic pull toward the seat", "passive force (spring + load − damping)", on, off} {
		if !slices.Contains(f.texts, want) {
			t.Errorf("SVG has no text %q: %q", want, f.texts)
		}
	}
}

// checkRunCSV checks run's --csv (README, "run"): the documented header,
// finite numbers, one row per accepted integrator step and one on each
// side of every event (steps + events rows: the start is an event with
// one side; more when a chopped hold's periods were repeated, whose rows
// are copied), the times from 0 to end (s) and never decreasing.
func checkRunCSV(t *testing.T, b []byte, solver jsonSolver, end float64) {
	t.Helper()
	rows, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil {
		t.Fatalf("CSV does not parse: %v", err)
	}
	const header = "time_s,current_A,coil_voltage_V,switch_voltage_V,gap_m,velocity_m_per_s,magnetic_force_N,passive_force_N,winding_temperature_degC"
	if got := strings.Join(rows[0], ","); got != header {
		t.Fatalf("CSV header %q, want %q", got, header)
	}
	n := len(rows) - 1
	if want := solver.Steps + solver.Events; n != want && (solver.PeriodsRepeated == 0 || n < want) {
		t.Errorf("CSV has %d rows, want %d steps + %d events (periods repeated: %d)", n, solver.Steps, solver.Events, solver.PeriodsRepeated)
	}
	prev := math.Inf(-1)
	for k, r := range rows[1:] {
		for _, cell := range r {
			if v, err := strconv.ParseFloat(cell, 64); err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("row %d: cell %q is not a finite number", k+1, cell)
			}
		}
		tm, _ := strconv.ParseFloat(r[0], 64)
		if tm < prev {
			t.Fatalf("row %d: time %g s before the previous row's %g s", k+1, tm, prev)
		}
		prev = tm
	}
	if first, _ := strconv.ParseFloat(rows[1][0], 64); first != 0 || math.Abs(prev-end) > 1e-12*end {
		t.Errorf("CSV from %s s to %g s, want 0 to timing.end %g s", rows[1][0], prev, end)
	}
}

// htmlDoc is a parsed report: its text, the text of each figure row by
// data-key, the class of each row, and its attributes for the reference
// check.
type htmlDoc struct {
	text     string
	rows     map[string][]string // data-key → cell texts
	rowClass map[string]string
	external []string // src/href/url() pointing outside the file
	scripts  int
	safety   []safetyItem // the notes of the safety box (section id="notes")
	outside  string       // the text outside the safety box
}

// safetyItem is one note of the safety box: its class and text.
type safetyItem struct{ class, text string }

// hasExternalURL reports a CSS url() that points outside the file:
// url( then optional blanks and one optional quote, then http:, https: or
// //, in any case (a scan: the regular expression took 20 ms on a
// report's embedded fonts).
func hasExternalURL(css string) bool {
	s := strings.ToLower(css)
	for {
		k := strings.Index(s, "url(")
		if k < 0 {
			return false
		}
		s = s[k+len("url("):]
		r := strings.TrimLeft(s, " \t\n\f\r")
		if len(r) > 0 && (r[0] == '\'' || r[0] == '"') {
			r = r[1:]
		}
		if strings.HasPrefix(r, "http:") || strings.HasPrefix(r, "https:") || strings.HasPrefix(r, "//") {
			return true
		}
	}
}

func parseReport(t *testing.T, b []byte) *htmlDoc {
	t.Helper()
	root, err := html.Parse(bytes.NewReader(b))
	if err != nil {
		t.Fatalf("report does not parse: %v", err)
	}
	d := &htmlDoc{rows: map[string][]string{}, rowClass: map[string]string{}}
	var text, outside strings.Builder
	var textOf func(n *html.Node) string
	textOf = func(n *html.Node) string {
		var s strings.Builder
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			if c.Type == html.TextNode {
				s.WriteString(c.Data)
			} else {
				s.WriteString(textOf(c))
			}
		}
		return s.String()
	}
	attr := func(n *html.Node, key string) string {
		for _, a := range n.Attr {
			if a.Key == key {
				return a.Val
			}
		}
		return ""
	}
	inBox := false
	var walk func(n *html.Node)
	walk = func(n *html.Node) {
		switch n.Type {
		case html.TextNode:
			if p := n.Parent; p == nil || (p.Data != "style" && p.Data != "script") {
				text.WriteString(n.Data)
				text.WriteString(" ")
				if !inBox {
					outside.WriteString(n.Data)
					outside.WriteString(" ")
				}
			} else if p.Data == "style" && hasExternalURL(n.Data) {
				d.external = append(d.external, "style url()")
			}
		case html.ElementNode:
			if n.Data == "script" {
				d.scripts++
			}
			for _, a := range n.Attr {
				v := strings.ToLower(strings.TrimSpace(a.Val))
				switch a.Key {
				case "src", "href", "xlink:href", "action", "poster", "srcset":
					if strings.HasPrefix(v, "http:") || strings.HasPrefix(v, "https:") || strings.HasPrefix(v, "//") {
						d.external = append(d.external, a.Key+"="+a.Val)
					}
				case "style":
					if hasExternalURL(v) {
						d.external = append(d.external, "style="+a.Val)
					}
				}
				if n.Data == "link" && a.Key == "href" {
					d.external = append(d.external, "link href="+a.Val)
				}
			}
			if n.Data == "tr" {
				for _, a := range n.Attr {
					if a.Key == "data-key" {
						var cells []string
						for c := n.FirstChild; c != nil; c = c.NextSibling {
							if c.Type == html.ElementNode && c.Data == "td" {
								cells = append(cells, strings.TrimSpace(textOf(c)))
							}
						}
						d.rows[a.Val] = cells
						for _, b := range n.Attr {
							if b.Key == "class" {
								d.rowClass[a.Val] = b.Val
							}
						}
					}
				}
			}
		}
		box := n.Type == html.ElementNode && n.Data == "section" && attr(n, "id") == "notes"
		if box {
			inBox = true
		}
		if inBox && n.Type == html.ElementNode && n.Data == "li" {
			d.safety = append(d.safety, safetyItem{attr(n, "class"), strings.Join(strings.Fields(textOf(n)), " ")})
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
		if box {
			inBox = false
		}
	}
	walk(root)
	d.text = strings.Join(strings.Fields(text.String()), " ")
	d.outside = strings.Join(strings.Fields(outside.String()), " ")
	return d
}

// flatJSON returns the metrics of a --json summary, decoded on its own,
// as key → value ("hold." for the hold's keys).
func flatJSON(t *testing.T, b []byte) (map[string]any, []map[string]any, []map[string]any) {
	t.Helper()
	var doc struct {
		Metrics map[string]any   `json:"metrics"`
		Checks  []map[string]any `json:"checks"`
		Notes   []map[string]any `json:"notes"`
	}
	if err := json.Unmarshal(b, &doc); err != nil {
		t.Fatal(err)
	}
	out := map[string]any{}
	for k, v := range doc.Metrics {
		if obj, ok := v.(map[string]any); ok {
			for k2, v2 := range obj {
				out[k+"."+k2] = v2
			}
		} else if k != "hold" && k != "release_not_applicable" {
			out[k] = v // release_not_applicable is shown as the release value
		}
	}
	return out, doc.Checks, doc.Notes
}

// TestReportEveryDemo: the report of each demo parses as HTML, shows every
// metric of the --json summary with the same value (formatted with
// figureText: si() by the key's unit suffix, as the text summary), every
// check with its verdict, the safety notes, and references nothing
// outside the file; its exit status is run's.
func TestReportEveryDemo(t *testing.T) {
	t.Parallel()
	var mu sync.Mutex
	seen := map[string]bool{}
	t.Run("demos", func(t *testing.T) {
		for _, f := range demos(t) {
			t.Run(filepath.Base(f), func(t *testing.T) {
				t.Parallel()
				d := demoOutputs(t, f)
				if d.report.code != d.run.code {
					t.Errorf("report exit %d, run exit %d: %s", d.report.code, d.run.code, d.report.stderr)
				}
				notes := checkReportShowsRun(t, d.name, d.read(t, d.reportHTML), d.read(t, d.json))
				mu.Lock()
				defer mu.Unlock()
				for _, n := range notes {
					seen[d.name+":"+n["level"].(string)] = true
				}
			})
		}
	})
	// The demos that must carry cautions do.
	for _, s := range []string{"door-latch:caution", "process-air-valve:caution"} {
		if !seen[s] {
			t.Errorf("no %s note in the report", s)
		}
	}
}

// checkReportShowsRun checks a demo's report hb against its run's --json
// summary jb: every metric with the same value, every check with its
// verdict, every note; no external reference, inline SVG figures, a print
// style, and a heat section for a duty-cycle demo. It returns the notes.
func checkReportShowsRun(t *testing.T, base string, hb, jb []byte) []map[string]any {
	t.Helper()
	doc := parseReport(t, hb)
	metrics, checks, notes := flatJSON(t, jb)
	if len(metrics) < 25 {
		t.Errorf("%s: only %d metrics in the JSON summary", base, len(metrics))
	}
	var keys []string
	for k := range metrics {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		if metrics[k] == nil && absentWhenNull(k) {
			continue // does not apply to this run (constant-hold ripple, say)
		}
		cells, ok := doc.rows[k]
		if !ok || len(cells) < 2 {
			t.Errorf("%s: metric %s is not in the report", base, k)
			continue
		}
		if w := figureText(k, metrics[k]); cells[1] != w {
			t.Errorf("%s: %s shows %q, JSON %v formats as %q", base, k, cells[1], metrics[k], w)
		}
		if !strings.Contains(doc.text, cells[1]) {
			t.Errorf("%s: %q not in the report's text", base, cells[1])
		}
	}
	// Checks: each with its verdict beside its figure.
	for _, c := range checks {
		name := c["name"].(string)
		key, ok := checkFigure[name]
		if !ok {
			key = "check:" + name
		}
		cells := doc.rows[key]
		verdict := "pass"
		if !c["pass"].(bool) {
			verdict = "FAIL"
			if !strings.Contains(doc.rowClass[key], "failed") {
				t.Errorf("%s: failing check %s not highlighted", base, name)
			}
		}
		if len(cells) < 4 || cells[3] != verdict {
			t.Errorf("%s: check %s: row %q, want verdict %s", base, name, cells, verdict)
		}
	}
	// Safety notes.
	for _, n := range notes {
		if txt := n["text"].(string); !strings.Contains(doc.text, txt) {
			t.Errorf("%s: note %q missing", base, txt)
		}
	}
	if len(doc.external) > 0 || doc.scripts > 0 {
		t.Errorf("%s: external references %v, %d scripts", base, doc.external, doc.scripts)
	}
	if !bytes.Contains(hb, []byte("<svg")) || bytes.Contains(hb, []byte("<?xml")) || bytes.Contains(hb, []byte("<img")) {
		t.Errorf("%s: figures are not inline SVG", base)
	}
	if !bytes.Contains(hb, []byte("@media print")) {
		t.Errorf("%s: no print style", base)
	}
	if strings.Contains(base, "duty") && !strings.Contains(doc.text, "Duty-cycle heating") {
		t.Errorf("%s: no heat section", base)
	}
	return notes
}

func TestReportCautionsAndEscaping(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	// door-latch: cautions, failing ratings, exit 2 with the report written.
	out := filepath.Join(dir, "latch.html")
	if code, _, stderr := runCLI("report", "--output", out, "../../scenarios/door-latch.yaml"); code != exitFailing {
		t.Fatalf("door latch: exit %d, want %d: %s", code, exitFailing, stderr)
	}
	b, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	doc := parseReport(t, b)
	for _, s := range []string{"CAUTION", "avalanche", "FAIL", "no suppression part is fitted"} {
		if !strings.Contains(strings.ToUpper(doc.text), strings.ToUpper(s)) {
			t.Errorf("door latch report lacks %q", s)
		}
	}
	if !bytes.Contains(b, []byte(`<li class="caution">`)) {
		t.Errorf("cautions not highlighted")
	}
	if !strings.Contains(doc.rowClass["peak_switch_voltage_V"], "caution") {
		t.Errorf("peak switch voltage row not marked with its caution: %q", doc.rowClass["peak_switch_voltage_V"])
	}

	// A scenario name with markup is escaped.
	src, err := os.ReadFile("../../scenarios/irrigation-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	name := `<script>alert(1)</script> "valve" & <b>co</b>`
	lines := strings.Split(string(src), "\n")
	for k, l := range lines {
		if strings.HasPrefix(l, "name:") {
			lines[k] = "name: '" + name + "'"
		}
	}
	yaml := filepath.Join(dir, "evil.yaml")
	if err := os.WriteFile(yaml, []byte(strings.Join(lines, "\n")), 0o644); err != nil {
		t.Fatal(err)
	}
	out = filepath.Join(dir, "evil.html")
	if code, _, stderr := runCLI("report", yaml, "-o", out); code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	b, err = os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	if bytes.Contains(b, []byte("<script>")) || bytes.Contains(b, []byte("<b>co")) {
		t.Errorf("scenario name not escaped")
	}
	if doc := parseReport(t, b); !strings.Contains(doc.text, name) || doc.scripts > 0 {
		t.Errorf("escaped name not shown as text (scripts %d)", doc.scripts)
	}

	// -o is required.
	if code, _, _ := runCLI("report", "../../scenarios/irrigation-valve.yaml"); code != exitError {
		t.Errorf("report without -o: exit %d", code)
	}
}

// TestReportCautionsInSafetyBox: every note of level caution, from the run
// (its --json notes) and from the heating study, is in the safety box and
// highlighted there (class "caution"); the heating study's caution is not
// left as plain text in its section. The door-strike demo's winding peaks
// at 78.8 °C, above the hot-surface threshold (HotSurfaceCaution).
func TestReportCautionsInSafetyBox(t *testing.T) {
	t.Parallel()
	for _, f := range []string{"../../scenarios/door-strike-duty.yaml", "../../scenarios/door-latch.yaml", "../../scenarios/process-air-valve.yaml"} {
		d := demoOutputs(t, f)
		base := d.name
		if d.report.code != d.run.code {
			t.Fatalf("%s: report exit %d, want run's %d: %s", base, d.report.code, d.run.code, d.report.stderr)
		}
		doc := parseReport(t, d.read(t, d.reportHTML))
		_, _, notes := flatJSON(t, d.read(t, d.json))
		var cautions []string
		for _, n := range notes {
			if n["level"] == "caution" {
				cautions = append(cautions, n["text"].(string))
			}
		}
		if strings.Contains(base, "duty") {
			md, err := coilkick.LoadModel(f)
			if err != nil {
				t.Fatal(err)
			}
			hr, err := coilkick.Heat(md, *md.Duty)
			if err != nil {
				t.Fatal(err)
			}
			var heat []string
			for _, n := range hr.Notes {
				if n.Level == "caution" {
					heat = append(heat, n.Text)
				}
			}
			if len(heat) == 0 || !strings.Contains(heat[0], "hot enough to burn") {
				t.Fatalf("%s: the heating study has no hot-surface caution (peak %.1f K): %q", base, hr.Peak, heat)
			}
			cautions = append(cautions, heat...)
			if strings.Contains(doc.outside, "hot enough to burn") {
				t.Errorf("%s: the hot-surface caution is also plain text outside the safety box", base)
			}
		}
		if len(cautions) == 0 {
			t.Logf("%s: no caution notes in this run", base)
		}
		for _, c := range cautions {
			found := false
			for _, s := range doc.safety {
				found = found || (s.class == "caution" && strings.Contains(s.text, c))
			}
			if !found {
				t.Errorf("%s: caution %q is not highlighted in the safety box %q", base, c, doc.safety)
			}
		}
		// Cautions first.
		for k := 1; k < len(doc.safety); k++ {
			if doc.safety[k].class == "caution" && doc.safety[k-1].class != "caution" {
				t.Errorf("%s: caution after a %s note in the safety box", base, doc.safety[k-1].class)
			}
		}
		if m := kiloseconds.FindAllString(doc.text, -1); m != nil {
			t.Errorf("%s: the report prints kiloseconds %q", base, m)
		}
	}
}
