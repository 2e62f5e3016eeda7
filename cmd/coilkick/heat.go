package main

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/urfave/cli/v2"

	"coilkick"
	"coilkick/cmd/coilkick/plot"
)

func cmdHeat(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	if md.Thermal == nil || md.Duty == nil {
		return fmt.Errorf("%s: a heat study needs a thermal section (ambient and the network) and a duty section (on time, period)", path)
	}
	res, err := coilkick.Heat(md, *md.Duty)
	if err != nil {
		return err
	}
	if f := c.String("csv"); f != "" {
		if err := writeFile(f, w, func(out io.Writer) error { return writeHeatCSV(out, res) }); err != nil {
			return err
		}
	}
	if f := c.String("plot"); f != "" {
		if err := plot.HeatHistory("Winding temperature — "+md.Name, res).Save(f); err != nil {
			return err
		}
	}
	failed := printHeat(w, path, md, res)
	if failed {
		return errFailing
	}
	return nil
}

func degC(k float64) string { return strconv.FormatFloat(k-273.15, 'f', 1, 64) + " degC" }

func printHeat(w io.Writer, path string, md *coilkick.Model, r *coilkick.HeatResult) (failed bool) {
	b := bufio.NewWriter(w)
	defer b.Flush()
	p := r.Pattern
	fmt.Fprintf(b, "coilkick heat: %s\nscenario: %s\n", md.Name, path)
	if len(p.Segments) > 0 {
		var parts []string
		for _, sg := range p.Segments {
			state := "off"
			if sg.On {
				state = "on"
			}
			parts = append(parts, si(sg.Duration, "s")+" "+state)
		}
		fmt.Fprintf(b, "duty: cycle of %s repeated (%s; relative on-time %.1f %%), ambient %s\n\n", strings.Join(parts, ", "), si(p.CycleTime(), "s"), 100*p.RelativeOnTime(), degC(r.Ambient))
	} else {
		fmt.Fprintf(b, "duty: %s on every %s (relative on-time %.1f %%), ambient %s\n\n", si(p.OnTime, "s"), si(p.Period, "s"), 100*p.RelativeOnTime(), degC(r.Ambient))
	}
	row := func(name, value string) { fmt.Fprintf(b, "  %-38s %s\n", name, value) }
	state := "periodic steady state"
	if !r.Steady {
		state = fmt.Sprintf("after %s (not yet steady)", si(float64(r.Cycles)*p.CycleTime(), "s"))
	}
	fmt.Fprintf(b, "Winding temperature (%s)\n", state)
	row("peak", degC(r.Peak))
	row("mean", degC(r.Mean))
	row("valley", degC(r.Valley))
	row("ripple", fmt.Sprintf("%.2f K", r.Ripple))
	if r.Steady {
		row("settled (within 0.01 K) after", si(r.SteadyAfter, "s"))
	}
	row("coil resistance at the peak", si(r.HotResistance, "ohm"))
	if r.Limit > 0 {
		verdict := "pass"
		if r.Peak > r.Limit {
			verdict, failed = "FAIL", true
		}
		row("insulation class "+r.Class+" (IEC 60085)", fmt.Sprintf("limit %s, margin %.1f K  %s", degC(r.Limit), r.Limit-r.Peak, verdict))
		held := "never reaches the limit"
		if r.HeldToLimit.Happened {
			held = "reaches the limit after " + si(r.HeldToLimit.Seconds, "s")
		}
		row("held on continuously", fmt.Sprintf("%s (steady %s)", held, degC(r.HeldSteady)))
		row("largest relative on-time within class", fmt.Sprintf("%.1f %%", 100*r.MaxRelativeOnTime))
	}
	fmt.Fprintln(b, "Hot coil")
	pull := func(iv coilkick.Interval) string {
		if !iv.Happened {
			failed = true
			return "did not pull in  FAIL"
		}
		return si(iv.Seconds, "s")
	}
	row("pull-in, hot, nominal supply", pull(r.HotPullIn))
	if r.LowSupply > 0 {
		row(fmt.Sprintf("pull-in, hot, low supply %s", si(r.LowSupply, "V")), pull(r.HotPullInLow))
	}
	if r.LowestPullInSupply > 0 {
		row("lowest supply that pulls in, hot", si(r.LowestPullInSupply, "V"))
	} else {
		row("lowest supply that pulls in, hot", "none up to the nominal supply")
	}
	if r.Peak > coilkick.HotSurfaceCaution {
		fmt.Fprintf(b, "\n  CAUTION: the winding reaches %s; the coil surface may be hot enough to burn: guard it and label it\n", degC(r.Peak))
	}
	fmt.Fprintf(b, "\nMethod: %d cycles stepped with the exact thermal solution; %d electrical simulations (5 K grid).\n", r.Cycles, r.Simulations)
	fmt.Fprintln(b, "INFO: model estimates; confirm with a temperature-rise test (resistance method) on the real part, and follow local codes.")
	return failed
}

func writeHeatCSV(w io.Writer, r *coilkick.HeatResult) error {
	if len(r.History) == 0 {
		return errors.New("no history")
	}
	b := bufio.NewWriter(w)
	fmt.Fprintln(b, "time_s,peak_winding_K,valley_winding_K")
	for _, h := range r.History {
		fmt.Fprintf(b, "%g,%.6f,%.6f\n", h.Time, h.Peak, h.Valley)
	}
	return b.Flush()
}
