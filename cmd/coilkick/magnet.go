package main

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"

	"github.com/urfave/cli/v2"

	"coilkick"
	"coilkick/cmd/coilkick/plot"
)

func cmdMagnet(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	s := md.MagnetSummary()
	if err := s.Check(); err != nil {
		return fmt.Errorf("%s: %v", path, err)
	}
	if g := md.Geometry; g != nil {
		for _, x := range []float64{md.Plunger.GapMin, md.Plunger.GapMax} {
			if b, _, err := g.SteelFluxDensity(s.RatedCurrent, x); err == nil && (math.IsNaN(b) || math.IsInf(b, 0)) {
				return fmt.Errorf("%s: the steel flux density at the %s gap is not a finite number (a dimension far outside its range?)", path, si(x, "m"))
			}
		}
	}
	var currents []float64
	if txt := c.String("currents"); txt != "" {
		if currents, err = parseCurrents(txt); err != nil {
			return err
		}
		for _, i := range currents {
			if i > maxCurrentRatio*s.RatedCurrent {
				return fmt.Errorf("--currents: %s is more than %d × the rated current %s", si(i, "A"), maxCurrentRatio, si(s.RatedCurrent, "A"))
			}
		}
	} else {
		for _, k := range []float64{0.25, 0.5, 0.75, 1, 1.25, 1.5} {
			currents = append(currents, k*s.RatedCurrent)
		}
	}
	outs := newOutputs(w)
	if f := c.String("plot"); f != "" {
		curves, err := md.ForceCurves(currents, 81)
		if err != nil {
			return err
		}
		passive := make([]float64, len(curves[0].Gap))
		for k, x := range curves[0].Gap {
			passive[k] = md.Plunger.PassiveForce(x, 0)
		}
		if err := outs.addFigure(f, plot.ForceVsGap("Magnetic pull versus air gap — "+md.Name, curves, passive)); err != nil {
			return err
		}
	}
	if f := c.String("curves"); f != "" {
		curves, err := md.ForceCurves(currents, 41)
		if err != nil {
			return err
		}
		outs.add(f, func(out io.Writer) error { return writeCurves(out, curves) })
	}
	if err := outs.commit(); err != nil {
		return err
	}
	printMagnet(w, path, md, &s)
	return nil
}

func printMagnet(w io.Writer, path string, md *coilkick.Model, s *coilkick.MagnetSummary) {
	b := bufio.NewWriter(w)
	defer b.Flush()
	name := md.Name
	if name == "" {
		name = "(no name)"
	}
	fmt.Fprintf(b, "coilkick magnet: %s\nscenario: %s\n\n", name, path)
	row := func(name, value string) { fmt.Fprintf(b, "  %-34s %s\n", name, value) }
	fmt.Fprintln(b, "Coil")
	if md.Coil.Turns > 0 {
		row("turns", strconv.FormatFloat(md.Coil.Turns, 'f', 0, 64))
	}
	if cb := md.CoilBuild; cb != nil {
		row("mean turn length", si(cb.MeanTurnLength, "m"))
		row("wire length", si(cb.WireLength, "m"))
		row("copper mass", fmt.Sprintf("%.3g g", cb.CopperMass*1e3))
		row("layers (turns per layer)", fmt.Sprintf("%d (%d)", cb.Layers, cb.TurnsPerLayer))
		row("copper fill factor", fmt.Sprintf("%.2f", cb.FillFactor))
	}
	row("resistance at 20 degC", si(md.Coil.ResistanceAt(293.15), "ohm"))
	if md.Temperature != 293.15 {
		row(fmt.Sprintf("resistance at %.0f degC", md.Temperature-273.15), si(md.CoilResistance(), "ohm"))
	}
	row("rated current (supply / R)", si(s.RatedCurrent, "A"))
	row("rated power (supply² / R)", si(md.Drive.Supply.Voltage*s.RatedCurrent, "W"))
	fmt.Fprintln(b, "Magnet")
	row("inductance, seated gap", fmt.Sprintf("%s (at rated current %s)", si(s.ClosedInductance, "H"), si(s.ClosedInductanceRated, "H")))
	row("inductance, rest gap", fmt.Sprintf("%s (at rated current %s)", si(s.OpenInductance, "H"), si(s.OpenInductanceRated, "H")))
	row("time constant L/R, seated / rest", si(s.TimeConstantClosed, "s")+" / "+si(s.TimeConstantOpen, "s"))
	row("pull at rest gap, rated current", fmt.Sprintf("%s against %s spring + load", si(s.ForceAtRest, "N"), si(s.SpringAtRest, "N")))
	row("pull at seated gap, rated current", fmt.Sprintf("%s against %s spring + load", si(s.ForceSeated, "N"), si(s.SpringSeated, "N")))
	sat := func(v float64) string {
		if v == 0 {
			return fmt.Sprintf("none below %g × rated", coilkick.SaturationSearch)
		}
		return fmt.Sprintf("%s (%.2f × rated)", si(v, "A"), v/s.RatedCurrent)
	}
	row("saturation onset, seated gap", sat(s.SaturationSeated))
	row("saturation onset, rest gap", sat(s.SaturationRest))
	fmt.Fprintf(b, "  (saturation onset: incremental inductance below %.0f %% of its zero-current value)\n", 100*coilkick.SaturationFraction)
	if g := md.Geometry; g != nil {
		for _, at := range []struct {
			name string
			x    float64
		}{{"seated", md.Plunger.GapMin}, {"rest", md.Plunger.GapMax}} {
			if bmax, part, err := g.SteelFluxDensity(s.RatedCurrent, at.x); err == nil {
				row("steel flux density, "+at.name+" gap", fmt.Sprintf("%.2f T at rated current, highest in the %s", bmax, part))
			}
		}
	}
	if s.ForceAtRest <= s.SpringAtRest {
		fmt.Fprintln(b, "\n  WARNING: at rated current the pull at the rest gap does not exceed the spring and load: it will not pull in")
	}
}

func writeCurves(w io.Writer, curves []coilkick.ForceCurve) error {
	b := bufio.NewWriter(w)
	fmt.Fprint(b, "gap_m")
	for _, c := range curves {
		fmt.Fprintf(b, ",force_N_at_%sA", strconv.FormatFloat(c.Current, 'g', 4, 64))
	}
	fmt.Fprintln(b)
	if len(curves) > 0 {
		for k := range curves[0].Gap {
			fmt.Fprint(b, strconv.FormatFloat(curves[0].Gap[k], 'g', 8, 64))
			for _, c := range curves {
				fmt.Fprint(b, ",", strconv.FormatFloat(c.Force[k], 'g', 8, 64))
			}
			fmt.Fprintln(b)
		}
	}
	return b.Flush()
}
