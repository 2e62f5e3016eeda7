package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"
	"unicode/utf8"

	"github.com/urfave/cli/v2"

	"coilkick"
	"coilkick/circuit"
	"coilkick/cmd/coilkick/plot"
)

// studyCommands are the design-study commands.
func studyCommands(stdout io.Writer) []*cli.Command {
	return []*cli.Command{
		fitCommand(stdout),
		sweepCommand(stdout),
		{
			Name:      "corners",
			Usage:     "worst case over the scenario's tolerances (and an optional Monte Carlo yield)",
			ArgsUsage: "SCENARIO.yaml",
			Flags: []cli.Flag{
				&cli.IntFlag{Name: "samples", Usage: "Monte Carlo samples for a yield estimate, at most 100000", DefaultText: "0, none"},
				&cli.Uint64Flag{Name: "seed", Value: 1, Usage: "Monte Carlo seed"},
				&cli.StringFlag{Name: "json", Usage: "write the checks, the corners and the yield to `FILE` (JSON; - for standard output instead of the table)"},
				&cli.StringFlag{Name: "csv", Usage: "write one row per check to `FILE` (CSV; - for standard output instead of the table)"},
			},
			Action: func(c *cli.Context) error { return cmdCorners(c, stdout) },
		},
		{
			Name:      "clamps",
			Usage:     "compare suppression options for the scenario's actuation and recommend one",
			ArgsUsage: "SCENARIO.yaml",
			Flags: []cli.Flag{
				&cli.StringFlag{Name: "plot", Usage: "plot release time versus peak switch voltage, one point per option, to `FILE`"},
				&cli.StringFlag{Name: "json", Usage: "write the options, the recommendation and the part ratings to `FILE` (JSON; - for standard output instead of the table)"},
				&cli.StringFlag{Name: "csv", Usage: "write one row per option to `FILE` (CSV; - for standard output instead of the table)"},
			},
			Action: func(c *cli.Context) error { return cmdClamps(c, stdout) },
		},
		{
			Name:      "solve",
			Usage:     "solve for the lowest supply that pulls in, the lowest hold, and the lowest clamp voltage that meets the release time",
			ArgsUsage: "SCENARIO.yaml",
			Flags: []cli.Flag{
				&cli.Float64Flag{Name: "margin", Value: 1.2, Usage: "holding force margin the hold must keep", DefaultText: "the scenario's ratings.hold force margin, else 1.2"},
				&cli.StringFlag{Name: "json", Usage: "write the answers to `FILE` (JSON; - for standard output instead of the table)"},
				&cli.StringFlag{Name: "csv", Usage: "write one row per answer to `FILE` (CSV; - for standard output instead of the table)"},
			},
			Action: func(c *cli.Context) error { return cmdSolve(c, stdout) },
		},
	}
}

func interval2(iv coilkick.Interval) string { return interval(iv, "never") }

func cmdCorners(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	if md.Tolerances == (coilkick.Tolerances{}) {
		return fmt.Errorf("%s: corners needs a tolerances section (supply, coil resistance, spring, load, ambient, hot winding)", path)
	}
	res, err := coilkick.Corners(md, md.Tolerances, c.Int("samples"), c.Uint64("seed"))
	if err != nil {
		return err
	}
	failed := false
	for _, ch := range res.Checks {
		failed = failed || !ch.Pass
	}
	outs := newOutputs(w)
	if f := c.String("json"); f != "" {
		doc := cornersJSON(newHeader("corners", md, path), md, res, failed)
		outs.add(f, func(out io.Writer) error { return writeJSONDoc(out, doc) })
	}
	if f := c.String("csv"); f != "" {
		keys := cornerCheckRecord(coilkick.CornerCheck{}, nil).keys()
		outs.add(f, func(out io.Writer) error { return writeRecordsCSV(out, keys, cornerCheckRecords(res)) })
	}
	if err := outs.commit(); err != nil {
		return err
	}
	if !toStdout(c, "json", "csv") {
		printCorners(w, path, md, res)
	}
	if failed {
		return errFailing
	}
	return nil
}

// printCorners prints the corners study as a table.
func printCorners(w io.Writer, path string, md *coilkick.Model, res *coilkick.CornerResult) {
	b := bufio.NewWriter(w)
	defer b.Flush()
	tol := md.Tolerances
	fmt.Fprintf(b, "coilkick corners: %s\nscenario: %s\n%d corners; winding %.0f degC (cold) and %.0f degC (hot)\n\n", md.Name, path,
		len(res.Corners), tol.ColdWinding(md)-273.15, tol.HotCorner(md)-273.15)
	for _, ch := range res.Checks {
		printCornerCheck(b, ch, len(res.Corners))
	}
	if res.Samples > 0 {
		fmt.Fprintf(b, "\nMonte Carlo: %d samples (seed %d), uniform within the tolerances: yield %.1f %% (95 %% Wilson score interval %.1f %% to %.1f %%)\n",
			res.Samples, res.Seed, 100*res.Yield, 100*res.YieldLow, 100*res.YieldHigh)
		if n := res.FailingCorners(); n > 0 && res.Yield == 1 {
			fmt.Fprintf(b, "  %d of %d corners fail although every sample passed: the failures lie at the extremes of the tolerances, which uniform sampling rarely reaches; the yield says how often, the corners say that it can happen.\n",
				n, len(res.Corners))
		}
	}
}

// printCornerCheck prints the worst case of one check.
func printCornerCheck(b io.Writer, ch coilkick.CornerCheck, corners int) {
	verdict := "pass"
	if !ch.Pass {
		verdict = "FAIL"
	}
	yesNo := ch.Min && ch.Limit == 0
	worst := "did not happen"
	switch {
	case ch.Corner == "":
		worst = "n/a"
	case yesNo:
		worst = map[bool]string{true: "yes", false: "no"}[ch.Worst != 0]
	case ch.Happened:
		worst = si(ch.Worst, ch.Unit)
		if ch.Unit == "" {
			worst = strconv.FormatFloat(ch.Worst, 'g', 3, 64)
		}
	}
	lim := ""
	switch {
	case yesNo:
	case ch.Min:
		lim = ">= " + strconv.FormatFloat(ch.Limit, 'g', 3, 64)
	default:
		lim = "<= " + si(ch.Limit, ch.Unit)
	}
	fmt.Fprintf(b, "  %-30s worst %-14s %-12s %s\n", ch.Name, worst, lim, verdict)
	if ch.Corner != "" && (!yesNo || !ch.Pass) {
		at := ch.Corner
		if ch.Tied > 0 {
			at += fmt.Sprintf(" (and %d more corners with the same value)", ch.Tied)
		}
		fmt.Fprintf(b, "      at: %s\n", at)
	}
	if n := len(ch.Failing); n > 0 && n < corners {
		fmt.Fprintf(b, "      fails at %d of %d corners\n", n, corners)
	}
	if ch.NotApplicable > 0 {
		fmt.Fprintf(b, "      not applicable at %d of %d corners (did not pull in or dropped out)\n", ch.NotApplicable, corners)
	}
}

func cmdClamps(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	cmp, err := coilkick.CompareClamps(md)
	if err != nil {
		return err
	}
	failed := cmp.DropOut != "" || cmp.Recommended < 0
	outs := newOutputs(w)
	if f := c.String("json"); f != "" {
		doc := clampsJSON(newHeader("clamps", md, path), md, cmp, failed)
		outs.add(f, func(out io.Writer) error { return writeJSONDoc(out, doc) })
	}
	if f := c.String("csv"); f != "" {
		keys := clampRecord(md, cmp, -1, coilkick.ClampOption{}).keys()
		outs.add(f, func(out io.Writer) error { return writeRecordsCSV(out, keys, clampRecords(md, cmp)) })
	}
	if f := c.String("plot"); f != "" {
		if err := outs.addFigure(f, clampsPlot(md, cmp)); err != nil {
			return err
		}
	}
	if err := outs.commit(); err != nil {
		return err
	}
	if !toStdout(c, "json", "csv") {
		printClamps(w, path, md, cmp)
	}
	if failed {
		return errFailing
	}
	return nil
}

// clampsWidth is the width the clamps text keeps within: its tables and
// the wrapped notes below them.
const clampsWidth = 120

// printClamps prints the comparison, the recommendation and the part
// ratings.
func printClamps(w io.Writer, path string, md *coilkick.Model, cmp *coilkick.ClampComparison) {
	b := bufio.NewWriter(w)
	defer b.Flush()
	fmt.Fprintf(b, "coilkick clamps: %s\nscenario: %s\nswitch rating %s, derated to %.0f %%: %s\n", md.Name, path,
		si(cmp.SwitchRating, "V"), 100*coilkick.ClampDerating, si(coilkick.ClampDerating*cmp.SwitchRating, "V"))
	if cmp.Rate > 0 {
		fmt.Fprintf(b, "operating pattern: %.3g operations/s, relative on-time %.3g %%\n", cmp.Rate, 100*cmp.OnFraction)
	}
	fmt.Fprintln(b)
	printClampTables(b, md, cmp)
	if cmp.DropOut != "" {
		wrapLine(b, fmt.Sprintf("No recommendation: %s whatever the clamp. Fix the hold (coilkick solve) before choosing a clamp.", cmp.DropOut))
		return
	}
	if cmp.Recommended < 0 {
		fmt.Fprintln(b, "No practical option meets the release requirement within the derated switch rating.")
		return
	}
	r := cmp.Options[cmp.Recommended]
	wrapLine(b, fmt.Sprintf("Recommended: %s (least switch stress that meets the requirement; within %.0f %% of the least, the lower energy per operation wins; reverse drive needs an H-bridge and is shown for comparison only).", r.Name, 100*coilkick.ClampStressBand))
	parts := fmt.Sprintf("Part ratings needed: peak current %s, energy per turn-off pulse %s", si(cmp.PartPeakCurrent, "A"), si(cmp.PartEnergy, "J"))
	if cmp.PartChopPower > 0 {
		parts += fmt.Sprintf(", %s while held chopping", si(cmp.PartChopPower, "W"))
	}
	if cmp.Rate > 0 {
		parts += fmt.Sprintf(", average power %s at the operating pattern", si(cmp.PartPower, "W"))
	}
	wrapLine(b, parts+"; choose parts with margin over these (derating per your practice).")
	wrapLine(b, fmt.Sprintf("Assumptions: added diodes drop %.1f V; RC snubber sized so I0·√(L/C) stays within the derated rating, R = √(L/C), capacitor at most %.3g µF (common practice, no source).",
		coilkick.AssumedDiodeDrop, coilkick.MaxSnubberCapacitance*1e6))
}

// printClampTables prints the options in two tables that each fit in
// clampsWidth columns: release and switch stress with the verdicts and a
// short remark, then what each part must take (peak current, turn-off
// energy, chopping and average power, energy per operation). A remark's
// full text (impractical, no part fits, error) is a numbered note below
// the first table. Every row has every cell ("-" where an option has no
// figures).
func printClampTables(b io.Writer, md *coilkick.Model, cmp *coilkick.ClampComparison) {
	req := "meets release"
	if md.Limits.MaxRelease > 0 {
		req = "release <= " + si(md.Limits.MaxRelease, "s")
	}
	rows := [][]string{{"option", "release", "drop", "switch peak", req, "within " + si(coilkick.ClampDerating*cmp.SwitchRating, "V"), "remark"}}
	var notes []string
	note := func(what, text string) string {
		notes = append(notes, text)
		return fmt.Sprintf("%s, note %d", what, len(notes))
	}
	yes := map[bool]string{true: "yes", false: "no"}
	for k, o := range cmp.Options {
		switch {
		case o.NoFit != "":
			rows = append(rows, dashRow(o.Name, len(rows[0]), note("no part fits", o.Name+": "+o.NoFit)))
			continue
		case o.Err != "":
			rows = append(rows, dashRow(o.Name, len(rows[0]), note("error", o.Name+": error: "+o.Err)))
			continue
		}
		release, drop := interval2(o.Release), interval2(o.Drop)
		remark := ""
		switch {
		case o.DropOut != "":
			release, drop, remark = "n/a", "n/a", "drops out while energized"
		case o.Impractical != "":
			remark = note("impractical", o.Name+": impractical: "+o.Impractical)
		case o.Suppressor.Kind == circuit.Bridge:
			remark = "needs an H-bridge"
		}
		if k == cmp.Recommended {
			remark = "<- recommended"
		}
		rows = append(rows, []string{o.Name, release, drop, si(o.PeakSwitchVoltage, "V"), yes[o.MeetsRelease], yes[o.WithinRating], remark})
	}
	fmt.Fprintln(b, "Release and switch stress (switch peak: the peak switch voltage at turn-off)")
	writeTable(b, rows)
	for k, n := range notes {
		wrapLine(b, fmt.Sprintf("note %d: %s", k+1, n))
	}
	if !md.Control.FastDecay && md.Control.Chops() {
		wrapLine(b, "Slow decay: the chopping off-times recirculate through the driver's own path, not through these parts; if a freewheel diode across the coil is that path, it also carries the hold's recirculation power (see coilkick run).")
	}
	fmt.Fprintln(b)
	fmt.Fprintln(b, "What each part must take (turn-off energy: from de-energize to the end of its conduction, per operation)")
	writeTable(b, clampPartRows(cmp, md.Control.Chops()))
	fmt.Fprintln(b)
}

// clampPartRows are the second clamps table: per option its peak current,
// turn-off energy, chopping power (chopped drives only), average power at
// the operating pattern (with a duty section only) and energy per
// operation (the turn-off pulse and chopping of one actuation: the
// recommendation's tie-break).
func clampPartRows(cmp *coilkick.ClampComparison, chops bool) [][]string {
	head := []string{"option", "peak current", "turn-off energy"}
	if chops {
		head = append(head, "chopping power")
	}
	if cmp.Rate > 0 {
		head = append(head, "average power")
	}
	head = append(head, "energy/operation")
	rows := [][]string{head}
	for _, o := range cmp.Options {
		if o.NoFit != "" || o.Err != "" {
			rows = append(rows, dashRow(o.Name, len(head), "-"))
			continue
		}
		row := []string{o.Name, si(o.PeakClampCurrent, "A"), si(o.ClampEnergy, "J")}
		if chops {
			row = append(row, si(o.ChopPower, "W"))
		}
		if cmp.Rate > 0 {
			row = append(row, si(o.ClampPower, "W"))
		}
		rows = append(rows, append(row, si(o.OperationEnergy, "J")))
	}
	return rows
}

// dashRow is a row of n cells for an option without figures: its name,
// "-" in every figure cell, and last in the last cell.
func dashRow(name string, n int, last string) []string {
	row := []string{name}
	for len(row) < n-1 {
		row = append(row, "-")
	}
	return append(row, last)
}

// wrapLine prints text wrapped at word boundaries to lines of at most
// clampsWidth columns (a word longer than that stays whole), continued
// lines indented by two spaces.
func wrapLine(w io.Writer, text string) {
	line := ""
	for _, word := range strings.Fields(text) {
		switch {
		case line == "":
			line = word
		case utf8.RuneCountInString(line)+1+utf8.RuneCountInString(word) > clampsWidth:
			fmt.Fprintln(w, line)
			line = "  " + word
		default:
			line += " " + word
		}
	}
	if line != "" {
		fmt.Fprintln(w, line)
	}
}

// writeTable prints rows as aligned columns (two spaces apart), without
// trailing blanks.
func writeTable(w io.Writer, rows [][]string) {
	var buf strings.Builder
	tw := tabwriter.NewWriter(&buf, 0, 0, 2, ' ', 0)
	for _, r := range rows {
		fmt.Fprintln(tw, strings.Join(r, "\t"))
	}
	tw.Flush()
	for _, line := range strings.Split(strings.TrimRight(buf.String(), "\n"), "\n") {
		fmt.Fprintln(w, strings.TrimRight(line, " "))
	}
}

// clampsPlot draws release time against peak switch voltage, a point per
// option: the release requirement as a horizontal line, the derated switch
// rating as a vertical one, options that miss either crossed, options that
// do not release (drop out while energized, say) in a band at the top, and
// options that could not be simulated named below the legend.
func clampsPlot(md *coilkick.Model, cmp *coilkick.ClampComparison) *plot.Figure {
	var pts []plot.ScatterPoint
	var zeners []int
	for k, o := range cmp.Options {
		if o.Err == "" && o.NoFit == "" && o.Suppressor.Kind == circuit.DiodeZener {
			zeners = append(zeners, k)
		}
	}
	var notes []string
	for k, o := range cmp.Options {
		switch {
		case o.NoFit != "":
			notes = append(notes, "not shown: "+o.Name+", no part of its kind fits (the reason is in the text and JSON)")
			continue
		case o.Err != "":
			notes = append(notes, "not simulated: "+o.Name)
			continue
		}
		label := clampPointLabel(o, k, zeners, k == cmp.Recommended)
		y := math.NaN()
		if o.Release.Happened && o.DropOut == "" {
			y = o.Release.Seconds * 1e3
		}
		pts = append(pts, plot.ScatterPoint{X: o.PeakSwitchVoltage, Y: y, Label: label, Failed: !o.MeetsRelease || !o.WithinRating})
	}
	var refs []plot.Reference
	if req := md.Limits.MaxRelease; req > 0 {
		refs = append(refs, plot.Reference{Value: req * 1e3, Label: fmt.Sprintf("release requirement %s (ratings.release time)", si(req, "s"))})
	}
	if cmp.SwitchRating > 0 {
		allow := coilkick.ClampDerating * cmp.SwitchRating
		refs = append(refs, plot.Reference{Value: allow, Vertical: true,
			Label: fmt.Sprintf("derated switch rating %s (%.0f %% of %s)", si(allow, "V"), 100*coilkick.ClampDerating, si(cmp.SwitchRating, "V"))})
	}
	return plot.MarkedScatter(plot.Scatter{Title: "Suppression options — " + md.Name, XLabel: "peak switch voltage (V)", YLabel: "release time (ms)",
		Points: pts, Limits: refs, PointLabel: "option",
		FailedLabel:  "misses the release requirement or the derated rating",
		MissingLabel: "no release (drops out while energized, or never releases)",
		Notes:        notes})
}

// clampPointLabel is the label of option o (index k) on the clamps plot:
// its name, except that only the first, the last and every sixth Zener
// (zeners: their indices) are labelled, a snubber is "RC snubber" (marked
// when impractical), and the recommended option says so.
func clampPointLabel(o coilkick.ClampOption, k int, zeners []int, recommended bool) string {
	if recommended {
		return strings.TrimPrefix(o.Name, "diode + ") + " (recommended)"
	}
	switch o.Suppressor.Kind {
	case circuit.DiodeZener:
		for n, z := range zeners {
			if z == k && (n == 0 || n == len(zeners)-1 || n%6 == 0) {
				return strings.TrimPrefix(o.Name, "diode + ")
			}
		}
		return ""
	case circuit.Snubber:
		if o.Impractical != "" {
			return "RC snubber (impractical)"
		}
		return "RC snubber"
	}
	return o.Name
}

// solveAnswer is one answer of solve: its identifier for scripts, the
// solution (or the reason it was not asked) and its error.
type solveAnswer struct {
	id       string
	sol      coilkick.Solution
	err      error
	notAsked string
	winding  float64 // K, of a supply answer; 0 otherwise
}

// unmet reports whether the answer found no setting that meets its
// requirement (or is blocked).
func (a solveAnswer) unmet() bool {
	return a.err == nil && a.notAsked == "" && (a.sol.Blocked != "" || !a.sol.Found)
}

// cmdSolve answers the solve-for questions (the lowest supply that pulls
// in, cold and hot; the lowest hold current; the lowest clamp voltage
// meeting the release requirement). Exit status 1 when an answer failed
// with an error, else 2 when one found no setting that meets it.
func cmdSolve(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	margin, from := solveMargin(c, md)
	answers := solveAll(md, margin)
	var errs, unmet int
	for _, a := range answers {
		switch {
		case a.err != nil:
			errs++
		case a.unmet():
			unmet++
		}
	}
	outs := newOutputs(w)
	if f := c.String("json"); f != "" {
		doc := solveDoc{jsonHeader: newHeader("solve", md, path), Margin: margin, MarginFrom: marginSource(from),
			Unmet: unmet, Errors: errs, Failed: unmet > 0 || errs > 0}
		for _, a := range answers {
			doc.Answers = append(doc.Answers, solveRecord(a))
		}
		outs.add(f, func(out io.Writer) error { return writeJSONDoc(out, doc) })
	}
	if f := c.String("csv"); f != "" {
		keys := solveRecord(solveAnswer{}).keys()
		var rows []record
		for _, a := range answers {
			rows = append(rows, solveRecord(a))
		}
		outs.add(f, func(out io.Writer) error { return writeRecordsCSV(out, keys, rows) })
	}
	if err := outs.commit(); err != nil {
		return err
	}
	if !toStdout(c, "json", "csv") {
		printSolve(w, path, md, margin, from, answers, errs, unmet)
	}
	switch {
	case errs > 0:
		return fmt.Errorf("solve: %d of the answers failed with an error", errs)
	case unmet > 0:
		return errFailing
	}
	return nil
}

// solveMargin is the hold force margin of the lowest hold and where it
// comes from: --margin, else the scenario's, else 1.2.
func solveMargin(c *cli.Context, md *coilkick.Model) (float64, string) {
	switch {
	case c.IsSet("margin"):
		return c.Float64("margin"), "--margin"
	case md.Limits.MinHoldMargin > 0:
		return md.Limits.MinHoldMargin, "the scenario's ratings.hold force margin"
	}
	return 1.2, "default"
}

// solveAll finds the answers: the lowest supply (and at the hot winding,
// when the scenario has one), the lowest hold, and the lowest clamp
// voltage when a release requirement is given (not asked when the
// scenario's part has no clamp voltage).
func solveAll(md *coilkick.Model, margin float64) []solveAnswer {
	var answers []solveAnswer
	add := func(a solveAnswer, s coilkick.Solution, err error) {
		a.sol, a.err = s, err
		answers = append(answers, a)
	}
	s, err := coilkick.LowestSupply(md, 0)
	add(solveAnswer{id: "lowest_supply", winding: md.Temperature}, s, err)
	if hot := md.Tolerances.HotWinding; hot > 0 {
		s, err := coilkick.LowestSupply(md, hot)
		add(solveAnswer{id: "lowest_supply_hot", winding: hot}, s, err)
	}
	s, err = coilkick.LowestHold(md, margin)
	add(solveAnswer{id: "lowest_hold"}, s, err)
	const clampWhat = "lowest clamp voltage meeting the release requirement"
	switch k := md.Drive.Suppressor.Kind; {
	case md.Limits.MaxRelease == 0:
	case k != circuit.DiodeZener && k != circuit.TVS && k != circuit.SwitchClamp:
		answers = append(answers, solveAnswer{id: "lowest_clamp_voltage", sol: coilkick.Solution{What: clampWhat, Unit: "V"},
			notAsked: fmt.Sprintf("the scenario's %v has no clamp voltage (coilkick clamps compares parts)", k)})
	default:
		s, err := coilkick.LowestClamp(md)
		if s.What == "" {
			s.What = "lowest clamp voltage"
		}
		add(solveAnswer{id: "lowest_clamp_voltage"}, s, err)
	}
	return answers
}

// marginSource names where the hold force margin came from, for scripts.
func marginSource(from string) string {
	switch from {
	case "--margin":
		return "flag"
	case "default":
		return "default"
	}
	return "scenario"
}

// printSolve prints the answers.
func printSolve(w io.Writer, path string, md *coilkick.Model, margin float64, from string, answers []solveAnswer, errs, unmet int) {
	b := bufio.NewWriter(w)
	defer b.Flush()
	fmt.Fprintf(b, "coilkick solve: %s\nscenario: %s\n", md.Name, path)
	fmt.Fprintf(b, "hold force margin %.3g (%s)\n\n", margin, from)
	for _, a := range answers {
		switch {
		case a.err != nil:
			fmt.Fprintf(b, "  %-58s error: %v\n", a.sol.What, a.err)
		case a.notAsked != "":
			fmt.Fprintf(b, "  %-58s not asked: %s\n", a.sol.What, a.notAsked)
		default:
			fmt.Fprintf(b, "  %-58s %s\n", a.sol.What, solutionText(a.sol))
		}
	}
	if errs == 0 && unmet > 0 {
		fmt.Fprintf(b, "\n%d answer(s) found no setting that meets the requirement.\n", unmet)
	}
}

// solutionText writes a solve-for answer: the value, or why there is none,
// with the searched range.
func solutionText(s coilkick.Solution) string {
	val := func(x float64) string {
		if s.Unit == "" {
			return strconv.FormatFloat(x, 'f', 3, 64)
		}
		return si(x, s.Unit)
	}
	var t string
	switch {
	case s.Blocked != "":
		t = "not applicable: " + s.Blocked
	case s.AlreadyMet != "":
		t = s.AlreadyMet
	case s.Found:
		t = val(s.Value)
	default:
		t = fmt.Sprintf("none in the searched range %s to %s", val(s.Lo), val(s.Hi))
	}
	if s.Note != "" && s.Blocked == "" {
		t += "  (" + s.Note + ")"
	}
	return t
}

// Machine-readable records of the study commands (sweep, corners, clamps,
// solve): one record is a JSON object with its keys in order and a CSV row
// under a header of the same keys, so that the two outputs cannot drift
// apart.

// field is a key and its value: nil (null), float64, *float64 (nil:
// null), int, bool, string or *string (nil: null).
type field struct {
	key   string
	value any
}

// record is an ordered JSON object, or a CSV row.
type record []field

// MarshalJSON writes the fields in order.
func (r record) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteByte('{')
	for k, f := range r {
		if k > 0 {
			b.WriteByte(',')
		}
		key, err := json.Marshal(f.key)
		if err != nil {
			return nil, err
		}
		val, err := json.Marshal(f.value)
		if err != nil {
			return nil, fmt.Errorf("%s: %v", f.key, err)
		}
		b.Write(key)
		b.WriteByte(':')
		b.Write(val)
	}
	b.WriteByte('}')
	return b.Bytes(), nil
}

// keys returns the record's keys in order.
func (r record) keys() []string {
	out := make([]string, len(r))
	for k, f := range r {
		out[k] = f.key
	}
	return out
}

// text is s, or nil (null) when empty.
func text(s string) *string {
	if s == "" {
		return nil
	}
	return &s
}

// cell formats a field's value for CSV: numbers (10 significant digits),
// true or false, text as it is; empty for null and for a non-finite
// number.
func cell(v any) string {
	switch x := v.(type) {
	case nil:
		return ""
	case float64:
		return num(x)
	case *float64:
		return numPtr(x)
	case int:
		return strconv.Itoa(x)
	case bool:
		return strconv.FormatBool(x)
	case *bool:
		if x == nil {
			return ""
		}
		return strconv.FormatBool(*x)
	case string:
		return x
	case *string:
		if x == nil {
			return ""
		}
		return *x
	}
	panic(fmt.Sprintf("coilkick: CSV cell of type %T", v))
}

// writeRecordsCSV writes a header of keys and one row per record; every
// record has exactly those keys.
func writeRecordsCSV(w io.Writer, keys []string, rows []record) error {
	out := make([][]string, len(rows))
	for k, r := range rows {
		if !slices.Equal(r.keys(), keys) {
			panic(fmt.Sprintf("coilkick: CSV row %d has keys %v, header %v", k, r.keys(), keys))
		}
		out[k] = make([]string, len(r))
		for j, f := range r {
			out[k][j] = cell(f.value)
		}
	}
	return writeCSVRows(w, keys, out)
}

// cornersDoc is the corners --json document.
type cornersDoc struct {
	jsonHeader
	ColdWinding    float64         `json:"cold_winding_degC"`
	HotWinding     float64         `json:"hot_winding_degC"`
	Tolerances     jsonTolerances  `json:"tolerances"`
	Corners        []record        `json:"corners"`
	Checks         []record        `json:"checks"`
	FailingCorners int             `json:"failing_corners"`
	MonteCarlo     *jsonMonteCarlo `json:"monte_carlo"`
	Failed         bool            `json:"failed"`
}

// jsonTolerances are the scenario's tolerances: fractions of the nominal
// value, the ambient spread in K, the hot winding in °C (null: not given).
type jsonTolerances struct {
	Supply         float64  `json:"supply"`
	CoilResistance float64  `json:"coil_resistance"`
	Spring         float64  `json:"spring"`
	Load           float64  `json:"load"`
	Ambient        float64  `json:"ambient_K"`
	HotWinding     *float64 `json:"hot_winding_degC"`
}

// jsonMonteCarlo is the Monte Carlo yield with its 95 % Wilson score
// interval.
type jsonMonteCarlo struct {
	Samples    int     `json:"samples"`
	Seed       uint64  `json:"seed"`
	Yield      float64 `json:"yield"`
	YieldLow   float64 `json:"yield_low"`
	YieldHigh  float64 `json:"yield_high"`
	Confidence float64 `json:"confidence"`
}

func cornersJSON(h jsonHeader, md *coilkick.Model, res *coilkick.CornerResult, failed bool) cornersDoc {
	tol := md.Tolerances
	doc := cornersDoc{jsonHeader: h, ColdWinding: toDegC(tol.ColdWinding(md)), HotWinding: toDegC(tol.HotCorner(md)),
		Tolerances: jsonTolerances{Supply: tol.Supply, CoilResistance: tol.CoilResistance, Spring: tol.Spring, Load: tol.Load,
			Ambient: tol.Ambient, HotWinding: optional(toDegC(tol.HotWinding), tol.HotWinding > 0)},
		Checks: cornerCheckRecords(res), FailingCorners: res.FailingCorners(), Failed: failed}
	for _, c := range res.Corners {
		r := cornerRecord("", &c)
		fails := []string{}
		for _, ch := range res.Checks {
			if slices.Contains(ch.Failing, c.Label) {
				fails = append(fails, ch.Name)
			}
		}
		doc.Corners = append(doc.Corners, append(r, field{"failing_checks", fails}))
	}
	if res.Samples > 0 {
		doc.MonteCarlo = &jsonMonteCarlo{Samples: res.Samples, Seed: res.Seed, Yield: res.Yield,
			YieldLow: res.YieldLow, YieldHigh: res.YieldHigh, Confidence: 0.95}
	}
	return doc
}

// cornerRecord is a corner's label and parameters (signed fractions of the
// nominal values, the winding temperature in °C), the keys prefixed; all
// null when c is nil.
func cornerRecord(prefix string, c *coilkick.Corner) record {
	r := record{{prefix + "label", nil}, {prefix + "supply_deviation", nil}, {prefix + "coil_resistance_deviation", nil},
		{prefix + "spring_deviation", nil}, {prefix + "load_deviation", nil}, {prefix + "winding_degC", nil}}
	if c != nil {
		for k, v := range []any{c.Label, c.Supply, c.Resistance, c.Spring, c.Load, toDegC(c.Temperature)} {
			r[k].value = v
		}
	}
	return r
}

// cornerCheckRecords are the checks of a corners study, one record each.
func cornerCheckRecords(res *coilkick.CornerResult) []record {
	byLabel := map[string]*coilkick.Corner{}
	for k := range res.Corners {
		byLabel[res.Corners[k].Label] = &res.Corners[k]
	}
	out := []record{}
	for _, ch := range res.Checks {
		out = append(out, cornerCheckRecord(ch, byLabel[ch.Corner]))
	}
	return out
}

// cornerCheckRecord is one check's worst case: the limit (null for a
// yes/no check, whose worst value is 1 for yes and 0 for no), the worst
// value (null when it did not happen there, or when the check applied at
// no corner) and the corner that gave it (null when none did).
func cornerCheckRecord(ch coilkick.CornerCheck, at *coilkick.Corner) record {
	kind, limit := "max", any(ch.Limit)
	switch {
	case ch.Min && ch.Limit == 0:
		kind, limit = "yes_no", nil
	case ch.Min:
		kind = "min"
	}
	var worst any
	if ch.Corner != "" && ch.Happened {
		worst = ch.Worst
	}
	r := record{{"name", ch.Name}, {"unit", ch.Unit}, {"limit_kind", kind}, {"limit", limit}, {"worst", worst}}
	r = append(r, cornerRecord("worst_corner_", at)...)
	return append(r, field{"tied_corners", ch.Tied}, field{"failing_corners", len(ch.Failing)},
		field{"not_applicable_corners", ch.NotApplicable}, field{"pass", ch.Pass})
}

// clampsDoc is the clamps --json document.
type clampsDoc struct {
	jsonHeader
	SwitchRating     float64          `json:"switch_rating_V"`
	Derating         float64          `json:"derating"`
	DeratedRating    float64          `json:"derated_switch_rating_V"`
	ReleaseLimit     *float64         `json:"release_requirement_s"`
	Rate             *float64         `json:"operations_per_s"`
	OnFraction       *float64         `json:"relative_on_time"`
	Options          []record         `json:"options"`
	RecommendedIndex *int             `json:"recommended_index"`
	Recommended      *string          `json:"recommended"`
	PartRatings      *jsonPartRatings `json:"part_ratings"`
	DropOut          *string          `json:"drop_out"`
	AssumedDiodeDrop float64          `json:"assumed_diode_drop_V"`
	MaxSnubberCap    float64          `json:"max_snubber_capacitance_F"`
	StressBand       float64          `json:"stress_band"`
	Failed           bool             `json:"failed"`
}

// jsonPartRatings are the ratings the recommended part needs.
type jsonPartRatings struct {
	Voltage     *float64 `json:"conduction_voltage_V"`
	PeakCurrent float64  `json:"peak_current_A"`
	Energy      float64  `json:"turn_off_energy_J"`
	ChopPower   *float64 `json:"chopping_power_W"`
	Power       *float64 `json:"average_power_W"`
}

func clampsJSON(h jsonHeader, md *coilkick.Model, cmp *coilkick.ClampComparison, failed bool) clampsDoc {
	doc := clampsDoc{jsonHeader: h, SwitchRating: cmp.SwitchRating, Derating: coilkick.ClampDerating,
		DeratedRating: coilkick.ClampDerating * cmp.SwitchRating, ReleaseLimit: optional(md.Limits.MaxRelease, md.Limits.MaxRelease > 0),
		Rate: optional(cmp.Rate, cmp.Rate > 0), OnFraction: optional(cmp.OnFraction, cmp.Rate > 0),
		Options: clampRecords(md, cmp), DropOut: text(cmp.DropOut), AssumedDiodeDrop: coilkick.AssumedDiodeDrop,
		MaxSnubberCap: coilkick.MaxSnubberCapacitance, StressBand: coilkick.ClampStressBand, Failed: failed}
	if k := cmp.Recommended; k >= 0 && k < len(cmp.Options) {
		doc.RecommendedIndex, doc.Recommended = &k, text(cmp.Options[k].Name)
		doc.PartRatings = &jsonPartRatings{Voltage: optional(cmp.PartVoltage, cmp.PartVoltage > 0), PeakCurrent: cmp.PartPeakCurrent,
			Energy: cmp.PartEnergy, ChopPower: optional(cmp.PartChopPower, md.Control.Chops()), Power: optional(cmp.PartPower, cmp.Rate > 0)}
	}
	return doc
}

// clampRecords are the options of a comparison, one record each.
func clampRecords(md *coilkick.Model, cmp *coilkick.ClampComparison) []record {
	out := []record{}
	for k, o := range cmp.Options {
		out = append(out, clampRecord(md, cmp, k, o))
	}
	return out
}

// clampRecord is option k: the part (kind, conduction voltage, Zener
// voltage, snubber R and C: null where they do not apply), its figures
// (null when it could not be simulated or no part of its kind fits;
// release and drop null when they did not happen or do not apply after a
// drop-out), the verdicts and the reasons.
func clampRecord(md *coilkick.Model, cmp *coilkick.ClampComparison, k int, o coilkick.ClampOption) record {
	sup := o.Suppressor
	var vCond, vZener, rSnub, cSnub any
	switch sup.Kind {
	case circuit.Snubber:
		rSnub, cSnub = sup.Resistance, sup.Capacitance
	case circuit.DiodeZener:
		vCond, vZener = sup.Voltage, o.ZenerVoltage
	default:
		if sup.Voltage > 0 {
			vCond = sup.Voltage
		}
	}
	r := record{{"name", o.Name}, {"kind", sup.Kind.String()}, {"conduction_voltage_V", vCond}, {"zener_voltage_V", vZener},
		{"snubber_resistance_ohm", rSnub}, {"snubber_capacitance_F", cSnub}}
	figures := []string{"release_time_s", "drop_time_s", "current_decay_time_s", "peak_switch_voltage_V", "peak_clamp_current_A",
		"turn_off_energy_J", "avalanche_energy_J", "chopping_power_W", "operation_energy_J", "average_power_W",
		"meets_release", "within_rating"}
	vals := make([]any, len(figures))
	if o.Err == "" && o.NoFit == "" && o.Name != "" {
		vals = []any{seconds(o.Release), seconds(o.Drop), seconds(o.Decay), o.PeakSwitchVoltage, o.PeakClampCurrent,
			o.ClampEnergy, o.AvalancheEnergy, optional(o.ChopPower, md.Control.Chops()), o.OperationEnergy, optional(o.ClampPower, cmp.Rate > 0),
			o.MeetsRelease, o.WithinRating}
		if o.DropOut != "" {
			vals[0], vals[1] = nil, nil
		}
	}
	for j, key := range figures {
		r = append(r, field{key, vals[j]})
	}
	return append(r, field{"recommended", k >= 0 && k == cmp.Recommended}, field{"impractical", text(o.Impractical)},
		field{"drop_out", text(o.DropOut)}, field{"no_fit", text(o.NoFit)}, field{"error", text(o.Err)})
}

// solveDoc is the solve --json document.
type solveDoc struct {
	jsonHeader
	Margin     float64  `json:"hold_force_margin"`
	MarginFrom string   `json:"hold_force_margin_source"`
	Answers    []record `json:"answers"`
	Unmet      int      `json:"answers_unmet"`
	Errors     int      `json:"answers_with_error"`
	Failed     bool     `json:"failed"`
}

// solveRecord is one answer: its identifier and description, the unit of
// its value and search range ("" for a plain number such as a duty), the
// value (null when none was found, the answer is blocked, not asked or
// failed), whether it was found, the range searched, and the texts: the
// requirement already met, blocked, not asked, the note, the error; then
// whether it is met and, for a clamp voltage found, the next E24 value
// (null otherwise).
func solveRecord(a solveAnswer) record {
	s := a.sol
	var value, lo, hi any
	if a.err == nil && a.notAsked == "" {
		lo, hi = s.Lo, s.Hi
		if s.Found && s.Blocked == "" {
			value = s.Value
		}
	}
	var errText *string
	var met any // null: not asked, or failed with an error
	switch {
	case a.err != nil:
		errText = text(a.err.Error())
	case a.notAsked == "":
		met = !a.unmet()
	}
	return record{{"id", a.id}, {"what", s.What}, {"unit", s.Unit}, {"value", value}, {"found", a.err == nil && a.notAsked == "" && s.Found},
		{"search_low", lo}, {"search_high", hi}, {"winding_degC", optional(toDegC(a.winding), a.winding > 0)},
		{"already_met", text(s.AlreadyMet)}, {"blocked", text(s.Blocked)}, {"not_asked", text(a.notAsked)},
		{"note", text(s.Note)}, {"error", errText}, {"met", met},
		{"next_e24_voltage_V", optional(s.NextE24, a.err == nil && s.NextE24 > 0)}}
}
