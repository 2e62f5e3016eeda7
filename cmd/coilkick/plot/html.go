package plot

import (
	"bytes"
	"fmt"
	"html/template"
	"io"
	"regexp"
	"sort"
	"strings"
)

// Report is the content of the HTML report, as display strings; the
// caller decides the figures and their formatting. All text is escaped
// when written.
type Report struct {
	Title   string // the scenario's name
	Source  string // the scenario file
	Summary []Item // what the scenario is: supply, coil, magnet, drive…
	Failed  bool
	Verdict string       // one line: how many checks pass
	Notes   []ReportNote // the run's; the safety box shows them with Heat.Notes
	Groups  []Group      // the key figures
	Events  []ReportEvent
	Figures []ReportFigure // drawn after the events table, in order
	Heat    *HeatSection   // nil without a duty-cycle study
	Footer  []string       // solver counts, disclaimers
}

// Item is a labelled value.
type Item struct{ Label, Value string }

// ReportNote is a safety note; Level "caution" is highlighted.
type ReportNote struct{ Figure, Level, Text string }

// safetyNotes are the notes of the safety box: the run's and the heating
// study's, cautions first, then warnings, then the rest, each kind in the
// order given. Every note of the report is shown there and only there, so
// no caution is left as plain text elsewhere.
func (r *Report) safetyNotes() []ReportNote {
	notes := append([]ReportNote(nil), r.Notes...)
	if r.Heat != nil {
		notes = append(notes, r.Heat.Notes...)
	}
	rank := func(level string) int {
		switch level {
		case "caution":
			return 0
		case "warning":
			return 1
		}
		return 2
	}
	sort.SliceStable(notes, func(i, j int) bool { return rank(notes[i].Level) < rank(notes[j].Level) })
	return notes
}

// Group is a table of figures under a heading.
type Group struct {
	Name string
	Rows []Row
}

// Row is one figure. Key (e.g. the JSON key) is written as a data-key
// attribute so that tools can find the figure.
type Row struct {
	Key, Name, Value string
	Requirement      string // e.g. "required ≤ 40 ms"; "" when not checked
	Checked, Pass    bool
	Caution          bool // a caution note concerns this figure
}

// ReportEvent is one row of the events table.
type ReportEvent struct{ Time, What string }

// ReportFigure is a figure with a heading and a caption.
type ReportFigure struct {
	ID, Heading, Caption string
	Figure               *Figure
}

// HeatSection is the duty-cycle heating study. Its Notes are shown in the
// report's safety box with the run's, not in the section.
type HeatSection struct {
	Intro  string
	Groups []Group
	Notes  []ReportNote
	Figure ReportFigure
}

// WriteHTML writes the report as one self-contained HTML document: inline
// SVG figures (their fonts embedded once, in the page's style), no
// scripts, no external references.
func WriteHTML(w io.Writer, r *Report) error {
	type fig struct {
		ID, Heading, Caption string
		SVG                  template.HTML
	}
	fonts := map[string]bool{}
	var fontCSS []string
	inline := func(f ReportFigure) (fig, error) {
		svg, faces, err := inlineSVG(f.Figure)
		if err != nil {
			return fig{}, err
		}
		for _, face := range faces {
			if !fonts[face] {
				fonts[face] = true
				fontCSS = append(fontCSS, face)
			}
		}
		return fig{f.ID, f.Heading, f.Caption, template.HTML(svg)}, nil // #nosec: our own SVG, its text escaped by vgsvg
	}
	var figs []fig
	for _, f := range r.Figures {
		x, err := inline(f)
		if err != nil {
			return fmt.Errorf("%s: %v", f.Heading, err)
		}
		figs = append(figs, x)
	}
	var heatFig *fig
	if r.Heat != nil && r.Heat.Figure.Figure != nil {
		x, err := inline(r.Heat.Figure)
		if err != nil {
			return fmt.Errorf("%s: %v", r.Heat.Figure.Heading, err)
		}
		heatFig = &x
	}
	data := struct {
		*Report
		Figs    []fig
		HeatFig *fig
		Safety  []ReportNote
		Fonts   template.CSS
		Style   template.CSS
	}{r, figs, heatFig, r.safetyNotes(), template.CSS(strings.Join(fontCSS, "\n")), template.CSS(reportCSS)}
	var buf bytes.Buffer
	if err := reportTemplate.Execute(&buf, data); err != nil {
		return err
	}
	_, err := w.Write(buf.Bytes())
	return err
}

// svgOpen is gonum's <svg> start tag: width, height (pt) and viewBox.
var svgOpen = regexp.MustCompile(`(?s)<svg width="([0-9.]+)pt" height="([0-9.]+)pt" viewBox="([^"]*)"`)

// fontFaces returns the @font-face rules of gonum's SVG style block, each
// from "@font-face{" to the first "\n\t\t}" after it (the regular
// expression (?s)@font-face\{.*?\n\t\t\}, which took 70 ms on the half a
// megabyte of an embedded font).
func fontFaces(css string) []string {
	const open, end = "@font-face{", "\n\t\t}"
	var out []string
	for {
		i := strings.Index(css, open)
		if i < 0 {
			return out
		}
		j := strings.Index(css[i+len(open):], end)
		if j < 0 {
			return out
		}
		k := i + len(open) + j + len(end)
		out = append(out, css[i:k])
		css = css[k:]
	}
}

// inlineSVG renders f as SVG for inclusion in HTML: no XML prolog, its
// @font-face rules returned separately (to be written once in the page),
// scaled to the width of its container.
func inlineSVG(f *Figure) (svg string, faces []string, err error) {
	var buf bytes.Buffer
	if err := f.WriteSVG(&buf); err != nil {
		return "", nil, err
	}
	s := buf.String()
	i := strings.Index(s, "<svg")
	if i < 0 {
		return "", nil, fmt.Errorf("plot: no <svg> element")
	}
	s = s[i:]
	if a, b := strings.Index(s, "<defs>"), strings.Index(s, "</defs>"); a >= 0 && b > a {
		faces = fontFaces(s[a:b])
		s = s[:a] + s[b+len("</defs>"):]
	}
	m := svgOpen.FindStringSubmatchIndex(s)
	if m == nil {
		return "", nil, fmt.Errorf("plot: unexpected <svg> element")
	}
	width := s[m[2]:m[3]]
	label := template.HTMLEscapeString(f.Title)
	s = fmt.Sprintf(`<svg role="img" aria-label="%s" style="max-width:%spt" viewBox="%s"`, label, width, s[m[6]:m[7]]) + s[m[1]:]
	return s, faces, nil
}

const reportCSS = `
:root { color-scheme: light; }
* { box-sizing: border-box; }
body { font-family: "Liberation Sans", Arial, Helvetica, sans-serif; color: #222; background: #fff;
  margin: 0 auto; padding: 24px 32px 48px; max-width: 1100px; line-height: 1.4; font-size: 15px; }
h1 { font-size: 1.6em; margin: 0 0 4px; font-weight: 600; }
h2 { font-size: 1.2em; margin: 28px 0 8px; padding-bottom: 3px; border-bottom: 1px solid #ccc; font-weight: 600; }
h3 { font-size: 1em; margin: 16px 0 4px; color: #444; font-weight: 600; }
.source { color: #555; margin: 0 0 12px; font-size: 0.92em; }
.source code { font-family: "Liberation Mono", Consolas, monospace; }
.verdict { display: inline-block; padding: 6px 12px; border-radius: 4px; font-weight: 600; margin: 6px 0 2px; }
.verdict.pass { background: #e8f3ea; color: #1b5e20; border: 1px solid #a5d6a7; }
.verdict.fail { background: #fdecea; color: #b71c1c; border: 1px solid #ef9a9a; }
dl.summary { display: grid; grid-template-columns: max-content 1fr; gap: 2px 16px; margin: 8px 0; }
dl.summary dt { color: #555; }
dl.summary dd { margin: 0; }
ul.notes { list-style: none; padding: 0; margin: 8px 0; }
ul.notes li { padding: 6px 10px; margin: 4px 0; border-left: 4px solid #bbb; background: #f7f7f7; }
ul.notes li.caution { border-left-color: #e65100; background: #fff3e0; }
ul.notes li.warning { border-left-color: #f9a825; background: #fffde7; }
ul.notes .level { font-weight: 700; text-transform: uppercase; font-size: 0.85em; letter-spacing: 0.03em; margin-right: 6px; }
ul.notes li.caution .level { color: #bf360c; }
ul.notes .fig { color: #555; }
.groups { display: grid; grid-template-columns: repeat(auto-fit, minmax(460px, 1fr)); gap: 0 28px; }
table { border-collapse: collapse; width: 100%; margin: 4px 0 8px; font-size: 0.94em; }
th, td { text-align: left; padding: 3px 8px 3px 0; border-bottom: 1px solid #e6e6e6; vertical-align: top; }
th { color: #555; font-weight: 600; border-bottom: 1px solid #bbb; }
td.v { font-variant-numeric: tabular-nums; white-space: nowrap; }
td.req { color: #555; white-space: nowrap; }
td.ok { color: #1b5e20; font-weight: 600; }
td.bad { color: #b71c1c; font-weight: 700; }
tr.failed td { background: #fdecea; }
tr.caution td:first-child::after { content: " \26A0"; color: #e65100; }
table.events td.t { font-variant-numeric: tabular-nums; white-space: nowrap; width: 8em; text-align: right; padding-right: 16px; }
figure { margin: 8px 0 16px; }
figure svg { width: 100%; height: auto; display: block; }
figcaption { color: #555; font-size: 0.9em; margin-top: 4px; }
footer { margin-top: 32px; color: #666; font-size: 0.85em; border-top: 1px solid #ccc; padding-top: 8px; }
footer p { margin: 2px 0; }
@media print {
  @page { size: A4; margin: 14mm; }
  body { padding: 0; max-width: none; font-size: 10pt; }
  h2 { break-after: avoid; }
  figure, table, ul.notes li, .groups > div { break-inside: avoid; }
  .groups { display: block; }
  figure svg { max-height: 240mm; }
  tr.failed td, .verdict, ul.notes li { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
}
`

var reportTemplate = template.Must(template.New("report").Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>coilkick report: {{.Title}}</title>
<style>
{{.Fonts}}
{{.Style}}
</style>
</head>
<body>
<header>
<h1>{{.Title}}</h1>
<p class="source">coilkick report · scenario <code>{{.Source}}</code></p>
<p class="verdict {{if .Failed}}fail{{else}}pass{{end}}" id="verdict">{{.Verdict}}</p>
</header>

<section id="scenario">
<h2>Scenario</h2>
<dl class="summary">
{{- range .Summary}}
<dt>{{.Label}}</dt><dd>{{.Value}}</dd>
{{- end}}
</dl>
</section>

{{if .Safety -}}
<section id="notes">
<h2>Safety notes</h2>
<ul class="notes">
{{- range .Safety}}
<li class="{{.Level}}"><span class="level">{{.Level}}</span>{{if .Figure}}<span class="fig">{{.Figure}}: </span>{{end}}{{.Text}}</li>
{{- end}}
</ul>
</section>
{{- end}}

<section id="figures">
<h2>Key figures</h2>
{{template "groups" .Groups}}
</section>

<section id="events">
<h2>Events</h2>
<table class="events">
<thead><tr><th class="t">time</th><th>event</th></tr></thead>
<tbody>
{{- range .Events}}
<tr><td class="t">{{.Time}}</td><td>{{.What}}</td></tr>
{{- end}}
</tbody>
</table>
</section>

{{range .Figs -}}
<section id="{{.ID}}">
<h2>{{.Heading}}</h2>
<figure>
{{.SVG}}
<figcaption>{{.Caption}}</figcaption>
</figure>
</section>
{{end}}

{{- with .Heat}}
<section id="heat">
<h2>Duty-cycle heating</h2>
<p>{{.Intro}}</p>
{{template "groups" .Groups}}
{{- with $.HeatFig}}
<figure>
{{.SVG}}
<figcaption>{{.Caption}}</figcaption>
</figure>
{{- end}}
</section>
{{- end}}

<footer>
{{- range .Footer}}
<p>{{.}}</p>
{{- end}}
</footer>
</body>
</html>
{{define "groups"}}<div class="groups">
{{- range .}}
<div>
<h3>{{.Name}}</h3>
<table class="figures">
<thead><tr><th>figure</th><th>value</th><th>requirement</th><th></th></tr></thead>
<tbody>
{{- range .Rows}}
<tr data-key="{{.Key}}"{{if or (and .Checked (not .Pass)) .Caution}} class="{{if and .Checked (not .Pass)}}failed{{end}}{{if .Caution}} caution{{end}}"{{end}}><td>{{.Name}}</td><td class="v">{{.Value}}</td><td class="req">{{.Requirement}}</td>{{if .Checked}}<td class="{{if .Pass}}ok{{else}}bad{{end}}">{{if .Pass}}pass{{else}}FAIL{{end}}</td>{{else}}<td></td>{{end}}</tr>
{{- end}}
</tbody>
</table>
</div>
{{- end}}
</div>{{end}}`))
