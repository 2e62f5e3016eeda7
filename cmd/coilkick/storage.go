package main

import (
	"bufio"
	"fmt"
	"io"
	"strings"

	"github.com/urfave/cli/v2"

	"coilkick"
)

// storageCommand is `coilkick storage`: the storage capacitor and pulse
// lengths of a capacitor-discharge drive at every tolerance corner.
func storageCommand(stdout io.Writer) *cli.Command {
	return &cli.Command{
		Name:      "storage",
		Usage:     "size a capacitor-discharge drive: the smallest preferred capacitance that latches (and releases) at every tolerance corner, and the shortest reliable pulses",
		ArgsUsage: "SCENARIO.yaml",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "series", Value: "E6", Usage: "the IEC 60063 series of the capacitor: E6, E12 or E24"},
			&cli.StringFlag{Name: "tolerance", Usage: "± tolerance of the capacitance (\"20 %\")", DefaultText: "the series' own: E6 20 %, E12 10 %, E24 5 %"},
			&cli.StringFlag{Name: "pulse-margin", Value: "25 %", Usage: "the recommended pulse is the shortest reliable one plus this fraction (\"25 %\", common practice, no source)"},
			&cli.StringFlag{Name: "json", Usage: "write the answer and the corners to `FILE` (JSON; - for standard output instead of the table)"},
			&cli.StringFlag{Name: "csv", Usage: "write the answer as one row to `FILE` (CSV; - for standard output instead of the table)"},
		},
		Action: func(c *cli.Context) error { return cmdStorage(c, stdout) },
	}
}

// storageOptions reads the flags.
func storageOptions(c *cli.Context) (coilkick.StorageOptions, error) {
	opt := coilkick.StorageOptions{Series: strings.ToUpper(c.String("series"))}
	if _, ok := coilkick.ESeriesTolerance(opt.Series); !ok {
		return opt, fmt.Errorf("--series %q: expected one of %s", c.String("series"), strings.Join(coilkick.ESeriesNames, ", "))
	}
	if c.IsSet("tolerance") {
		s := c.String("tolerance")
		v, err := coilkick.ParseQuantity(s, coilkick.Dimensionless)
		if err != nil || !(v > 0 && v < 1) {
			return opt, fmt.Errorf("--tolerance %q: expected a fraction above 0 %% and below 100 %% such as \"20 %%\"", s)
		}
		opt.Tolerance = v
	}
	s := c.String("pulse-margin")
	v, err := coilkick.ParseQuantity(s, coilkick.Dimensionless)
	if err != nil || !(v >= 0 && v <= 10) {
		return opt, fmt.Errorf("--pulse-margin %q: expected a fraction from 0 %% to 1000 %% such as \"25 %%\"", s)
	}
	opt.PulseMargin = v
	return opt, nil
}

func cmdStorage(c *cli.Context, w io.Writer) error {
	opt, err := storageOptions(c)
	if err != nil {
		return err
	}
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	res, err := coilkick.StorageSize(md, opt)
	if err != nil {
		return fmt.Errorf("%s: %s", path, strings.TrimPrefix(err.Error(), "coilkick: "))
	}
	outs := newOutputs(w)
	if f := c.String("json"); f != "" {
		doc := storageJSON(newHeader("storage", md, path), md, res, opt.PulseMargin)
		outs.add(f, func(out io.Writer) error { return writeJSONDoc(out, doc) })
	}
	if f := c.String("csv"); f != "" {
		rows := []record{storageRecord(md, res)}
		outs.add(f, func(out io.Writer) error { return writeRecordsCSV(out, rows[0].keys(), rows) })
	}
	if err := outs.commit(); err != nil {
		return err
	}
	if !toStdout(c, "json", "csv") {
		printStorage(w, path, md, res, opt.PulseMargin)
	}
	if res.Failed() {
		return errFailing
	}
	return nil
}

// storageRequirement says what every corner must do.
func storageRequirement(md *coilkick.Model, res *coilkick.StorageSizing) string {
	latch := fmt.Sprintf("pull in and be seated at the end of the %s latch pulse", si(res.LatchPulse.Given, "s"))
	if md.HasPermanentMagnet() {
		latch += ", then stay latched on its magnet"
	}
	if !res.Release {
		return latch
	}
	rel := fmt.Sprintf("; release with the %s reverse pulse %s after it (leave the seat, reach the rest stop, not re-latch)",
		si(res.ReleasePulse.Given, "s"), si(md.Control.ReverseDelay, "s"))
	if md.DemagCurrent > 0 {
		rel += fmt.Sprintf(", the reverse current within the demagnetising current %s", si(md.DemagCurrent, "A"))
	}
	return latch + rel
}

// verdictText is "passes" or "fails at CORNER: REASON".
func verdictText(v coilkick.StorageVerdict) string {
	if v.Pass {
		return "passes at every corner"
	}
	return fmt.Sprintf("fails at %s: %s", v.Corner, v.Reason)
}

// printStorage prints the study.
func printStorage(w io.Writer, path string, md *coilkick.Model, res *coilkick.StorageSizing, margin float64) {
	b := bufio.NewWriter(w)
	defer b.Flush()
	fmt.Fprintf(b, "coilkick storage: %s\nscenario: %s\n", md.Name, path)
	fmt.Fprintf(b, "capacitor: IEC 60063 %s values, tolerance ±%.3g %%\n", res.Series, 100*res.Tolerance)
	fmt.Fprintf(b, "%d corners: the battery (low and high), the winding (hot and cold), the capacitance, and the coil resistance, spring and load tolerances\n", len(res.Corners))
	fmt.Fprintf(b, "every corner must %s\n\n", storageRequirement(md, res))
	fmt.Fprintf(b, "Storage capacitor\n")
	if !res.Found {
		fmt.Fprintf(b, "  none from %s to %s: %s\n", coilkick.CapacitanceText(1e-6), coilkick.CapacitanceText(10), res.Blocked)
	} else {
		fmt.Fprintf(b, "  %-20s %s (±%.3g %%: %s to %s)\n", "smallest "+res.Series+" value", coilkick.CapacitanceText(res.Capacitance), 100*res.Tolerance,
			coilkick.CapacitanceText(res.Capacitance*(1-res.Tolerance)), coilkick.CapacitanceText(res.Capacitance*(1+res.Tolerance)))
		if res.Below > 0 {
			fmt.Fprintf(b, "  %-20s %s %s\n", "one step below", coilkick.CapacitanceText(res.Below), verdictText(res.BelowVerdict))
		}
		fmt.Fprintf(b, "  %-20s %s nominal (bisection to %.2g %%)\n", "least of any value", coilkick.CapacitanceText(res.Threshold), 100*coilkick.SolveRel)
	}
	fmt.Fprintf(b, "  %-20s %s with its pulses %s\n\n", "the scenario's", coilkick.CapacitanceText(md.Storage.Capacitance), verdictText(res.Given))
	if res.Found {
		fmt.Fprintf(b, "Pulses with %s\n", coilkick.CapacitanceText(res.Capacitance))
		printPulse(b, "latch pulse", res.LatchPulse, margin)
		if res.Release {
			printPulse(b, "release pulse", res.ReleasePulse, margin)
		}
		fmt.Fprintln(b)
	}
	fmt.Fprintf(b, "%d simulations\n", res.Runs)
	fmt.Fprintf(b, "CAUTION: the shortest pulses and the smallest capacitance have no margin beyond the corners; the recommended pulses add %.3g %% (common practice, no source). Check the answer on the bench at the corners before relying on it.\n", 100*margin)
	fmt.Fprintf(b, "CAUTION: a storage capacitor keeps its charge (%s here) after the battery is removed: discharge it before touching the driver, and follow local codes and licensed practice.\n",
		si(md.Storage.StartEnergy(md.Drive.Supply.Voltage), "J"))
}

// printPulse prints one pulse answer.
func printPulse(b io.Writer, name string, pa coilkick.PulseAnswer, margin float64) {
	fmt.Fprintf(b, "  %-14s shortest %s at every corner", name, si(pa.Shortest, "s"))
	if !pa.Limit.Pass && pa.Limit.Corner != "" {
		fmt.Fprintf(b, " (just below: %s)", verdictText(pa.Limit))
	}
	fmt.Fprintln(b)
	switch {
	case pa.LongestFound:
		fmt.Fprintf(b, "  %-14s longest %s (just above: %s)\n", "", si(pa.Longest, "s"), verdictText(pa.LongestLimit))
	case pa.LongestSearched > 0:
		fmt.Fprintf(b, "  %-14s longest: no limit found up to %s\n", "", si(pa.LongestSearched, "s"))
	}
	fmt.Fprintf(b, "  %-14s recommended %s (shortest + %.3g %%), the scenario's %s\n", "", si(pa.Recommended, "s"), 100*margin, si(pa.Given, "s"))
	if pa.Note != "" {
		fmt.Fprintf(b, "  %-14s %s\n", "", pa.Note)
	}
}

// storageDoc is the storage --json document.
type storageDoc struct {
	jsonHeader
	Series       string              `json:"series"`
	Tolerance    float64             `json:"capacitance_tolerance"`
	PulseMargin  float64             `json:"pulse_margin"`
	Release      bool                `json:"release_required"`
	Answer       record              `json:"answer"`
	Below        *jsonStorageVerdict `json:"one_step_below"`
	Given        jsonStorageVerdict  `json:"scenario_design"`
	Corners      []jsonStorageCorner `json:"corners"`
	LatchPulse   *jsonPulseAnswer    `json:"latch_pulse"`
	ReleasePulse *jsonPulseAnswer    `json:"release_pulse"`
	Simulations  int                 `json:"simulations"`
	Failed       bool                `json:"failed"`
	Blocked      *string             `json:"blocked"`
}

// jsonStorageVerdict is a pass, or the first failing corner and why.
type jsonStorageVerdict struct {
	Capacitance float64 `json:"capacitance_F"`
	Pass        bool    `json:"passes_every_corner"`
	Corner      *string `json:"failing_corner"`
	Reason      *string `json:"reason"`
}

// jsonStorageCorner is one corner.
type jsonStorageCorner struct {
	Label       string  `json:"label"`
	Supply      float64 `json:"supply_V"`
	Winding     float64 `json:"winding_degC"`
	Capacitance float64 `json:"capacitance_deviation"`
	Resistance  float64 `json:"coil_resistance_deviation"`
	Spring      float64 `json:"spring_deviation"`
	Load        float64 `json:"load_deviation"`
}

// jsonPulseAnswer is a pulse answer (null: not found or not bounded).
type jsonPulseAnswer struct {
	Given       float64             `json:"scenario_s"`
	Shortest    *float64            `json:"shortest_s"`
	Recommended *float64            `json:"recommended_s"`
	Longest     *float64            `json:"longest_s"`
	Searched    *float64            `json:"longest_searched_s"`
	BelowFails  *jsonStorageVerdict `json:"just_below_shortest"`
	AboveFails  *jsonStorageVerdict `json:"just_above_longest"`
	Note        *string             `json:"note"`
}

func newJSONVerdict(c float64, v coilkick.StorageVerdict) jsonStorageVerdict {
	return jsonStorageVerdict{Capacitance: c, Pass: v.Pass, Corner: text(v.Corner), Reason: text(v.Reason)}
}

func newJSONPulse(c float64, pa coilkick.PulseAnswer) *jsonPulseAnswer {
	out := &jsonPulseAnswer{Given: pa.Given, Shortest: optional(pa.Shortest, pa.Found), Recommended: optional(pa.Recommended, pa.Found),
		Longest: optional(pa.Longest, pa.LongestFound), Searched: optional(pa.LongestSearched, pa.LongestSearched > 0), Note: text(pa.Note)}
	if pa.Found {
		v := newJSONVerdict(c, pa.Limit)
		out.BelowFails = &v
	}
	if pa.LongestFound {
		v := newJSONVerdict(c, pa.LongestLimit)
		out.AboveFails = &v
	}
	return out
}

// storageJSON builds the document.
func storageJSON(h jsonHeader, md *coilkick.Model, res *coilkick.StorageSizing, margin float64) storageDoc {
	doc := storageDoc{jsonHeader: h, Series: res.Series, Tolerance: res.Tolerance, PulseMargin: margin, Release: res.Release,
		Answer: storageRecord(md, res), Given: newJSONVerdict(md.Storage.Capacitance, res.Given), Simulations: res.Runs,
		Failed: res.Failed(), Blocked: text(res.Blocked)}
	if res.Below > 0 {
		v := newJSONVerdict(res.Below, res.BelowVerdict)
		doc.Below = &v
	}
	for _, c := range res.Corners {
		doc.Corners = append(doc.Corners, jsonStorageCorner{Label: c.Label, Supply: c.Supply, Winding: toDegC(c.Temperature),
			Capacitance: c.Capacitance, Resistance: c.Resistance, Spring: c.Spring, Load: c.Load})
	}
	if res.Found {
		doc.LatchPulse = newJSONPulse(res.Capacitance, res.LatchPulse)
		if res.Release {
			doc.ReleasePulse = newJSONPulse(res.Capacitance, res.ReleasePulse)
		}
	}
	return doc
}

// storageRecord is the answer as one record (the CSV row).
func storageRecord(md *coilkick.Model, res *coilkick.StorageSizing) record {
	lp, rp := res.LatchPulse, res.ReleasePulse
	rel := res.Found && res.Release
	return record{
		{"series", res.Series},
		{"capacitance_tolerance", res.Tolerance},
		{"found", res.Found},
		{"capacitance_F", optional(res.Capacitance, res.Found)},
		{"one_step_below_F", optional(res.Below, res.Below > 0)},
		{"least_capacitance_F", optional(res.Threshold, res.Found)},
		{"scenario_capacitance_F", md.Storage.Capacitance},
		{"scenario_design_passes", res.Given.Pass},
		{"latch_pulse_shortest_s", optional(lp.Shortest, res.Found && lp.Found)},
		{"latch_pulse_recommended_s", optional(lp.Recommended, res.Found && lp.Found)},
		{"release_pulse_shortest_s", optional(rp.Shortest, rel && rp.Found)},
		{"release_pulse_longest_s", optional(rp.Longest, rel && rp.LongestFound)},
		{"release_pulse_recommended_s", optional(rp.Recommended, rel && rp.Found)},
	}
}
