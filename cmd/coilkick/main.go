// Command coilkick simulates one actuation of a DC solenoid drive from a
// scenario file and reports pull-in, release, switch stress and clamp
// energy against the scenario's ratings.
//
// Exit status: 0 ok, 1 error (bad input, failed simulation), 2 a rating
// or requirement fails.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/urfave/cli/v2"

	"coilkick"
	"coilkick/cmd/coilkick/outfile"
)

func main() {
	os.Exit(run(os.Stdout, os.Stderr, os.Args))
}

// Exit statuses.
const (
	exitOK      = 0
	exitError   = 1
	exitFailing = 2
)

// errFailing marks a run that worked but failed a rating or requirement.
var errFailing = errors.New("a rating or requirement fails")

// valueFlags are the flags that take a value, for reordering arguments.
var valueFlags = map[string]bool{"csv": true, "json": true, "tolerance": true, "curves": true, "currents": true,
	"plot": true, "o": true, "output": true, "vary": true, "seed": true, "samples": true, "workers": true,
	"trace": true, "params": true, "margin": true, "plot-window": true, "figure": true}

// permute moves flags written after positional arguments in front of them,
// so that "coilkick run valve.yaml --csv out.csv" works: the flag parser
// stops at the first positional argument.
func permute(args []string) []string {
	var flags, pos []string
	for i := 0; i < len(args); i++ {
		a := args[i]
		if a == "--" {
			pos = append(pos, args[i+1:]...)
			break
		}
		if strings.HasPrefix(a, "-") && len(a) > 1 {
			flags = append(flags, a)
			name := strings.TrimLeft(a, "-")
			if valueFlags[name] && !strings.Contains(name, "=") && i+1 < len(args) {
				flags = append(flags, args[i+1])
				i++
			}
			continue
		}
		pos = append(pos, a)
	}
	return append(flags, pos...)
}

func run(stdout, stderr io.Writer, args []string) int {
	if len(args) > 2 {
		args = append(args[:2:2], permute(args[2:])...)
		if err := checkOutputs(args[2:]); err != nil {
			fmt.Fprintf(stderr, "coilkick: %v\n", err)
			return exitError
		}
	}
	app := &cli.App{
		Name:      "coilkick",
		Usage:     "simulate the transient behaviour of a DC solenoid drive",
		Writer:    stdout,
		ErrWriter: stderr,
		// Exit codes are decided here, not by the library.
		ExitErrHandler: func(*cli.Context, error) {},
		// --vary takes lists with commas ("plunger.mass=5 g,8 g").
		DisableSliceFlagSeparator: true,
		Commands: append([]*cli.Command{
			{
				Name:      "run",
				Usage:     "simulate one actuation and print the figures, checks and safety notes",
				ArgsUsage: "SCENARIO.yaml",
				Flags: []cli.Flag{
					&cli.StringFlag{Name: "csv", Usage: "write the time series to `FILE`"},
					&cli.StringFlag{Name: "json", Usage: "write the summary to `FILE` (- for standard output)"},
					&cli.Float64Flag{Name: "tolerance", Usage: "relative tolerance of the integrator (default: scenario's, else 1e-8)"},
					&cli.StringFlag{Name: "plot", Usage: "write the waveform plot to `FILE` (.png or .svg)"},
					&cli.StringFlag{Name: "plot-window", Usage: "plot only `FROM:TO` (ms), e.g. 0:20 for the pull-in"},
				},
				Action: func(c *cli.Context) error { return cmdRun(c, stdout) },
			},
			{
				Name:      "magnet",
				Usage:     "print the coil and magnet figures (inductance, force, saturation) without simulating",
				ArgsUsage: "SCENARIO.yaml",
				Flags: []cli.Flag{
					&cli.StringFlag{Name: "curves", Usage: "write force versus gap for a family of currents to `FILE` (CSV)"},
					&cli.StringFlag{Name: "currents", Usage: "currents of the family, in A, comma-separated (default: 0.25 to 1.5 × rated)"},
					&cli.StringFlag{Name: "plot", Usage: "plot force versus gap for the family, with spring + load, to `FILE` (.png or .svg)"},
				},
				Action: func(c *cli.Context) error { return cmdMagnet(c, stdout) },
			},
			{
				Name:      "heat",
				Usage:     "duty-cycle heating study: winding temperature, insulation class, hot-coil pull-in",
				ArgsUsage: "SCENARIO.yaml",
				Flags: []cli.Flag{
					&cli.StringFlag{Name: "csv", Usage: "write the temperature history (peak and valley per cycle) to `FILE`"},
					&cli.StringFlag{Name: "plot", Usage: "plot the temperature history to `FILE` (.png or .svg)"},
				},
				Action: func(c *cli.Context) error { return cmdHeat(c, stdout) },
			},
			{
				Name:      "check",
				Usage:     "validate a scenario file without simulating",
				ArgsUsage: "SCENARIO.yaml",
				Action:    func(c *cli.Context) error { return cmdCheck(c, stdout) },
			},
		}, append(studyCommands(stdout), reportCommands(stdout)...)...),
	}
	err := app.Run(args)
	switch {
	case err == nil:
		return exitOK
	case errors.Is(err, errFailing):
		return exitFailing
	default:
		fmt.Fprintf(stderr, "coilkick: %v\n", err)
		return exitError
	}
}

// oneFile returns the single scenario argument.
func oneFile(c *cli.Context) (string, error) {
	if c.NArg() != 1 {
		return "", fmt.Errorf("%s needs exactly one scenario file, got %d arguments", c.Command.Name, c.NArg())
	}
	return c.Args().First(), nil
}

// loadArg loads the model named by the command's single argument.
func loadArg(c *cli.Context) (string, *coilkick.Model, error) {
	path, err := oneFile(c)
	if err != nil {
		return "", nil, err
	}
	md, err := coilkick.LoadModel(path)
	return path, md, err
}

func cmdCheck(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	name := md.Name
	if name == "" {
		name = "no name"
	}
	fmt.Fprintf(w, "%s: ok (%s)\n", path, name)
	return nil
}

func cmdRun(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	res, err := coilkick.Simulate(md, &coilkick.Options{Tolerance: c.Float64("tolerance")})
	if err != nil {
		return err
	}
	as := md.Assess(res)
	if f := c.String("csv"); f != "" {
		if err := writeFile(f, w, func(out io.Writer) error { return writeCSV(out, &res.Trace) }); err != nil {
			return err
		}
	}
	if f := c.String("json"); f != "" {
		if err := writeFile(f, w, func(out io.Writer) error { return writeJSON(out, md, res, &as) }); err != nil {
			return err
		}
	}
	if f := c.String("plot"); f != "" {
		pr := res
		if win := c.String("plot-window"); win != "" {
			var err error
			if pr, err = cropResult(res, win); err != nil {
				return err
			}
		}
		if err := plotRun(f, path, md, pr); err != nil {
			return err
		}
	}
	if c.String("json") != "-" {
		printSummary(w, path, md, res, &as)
	}
	if as.Failed() {
		return errFailing
	}
	return nil
}

// writeFile writes to the named file atomically (outfile.Write), or to w
// for "-".
func writeFile(name string, w io.Writer, write func(io.Writer) error) error {
	if name == "-" {
		return write(w)
	}
	return outfile.Write(name, write)
}

// outputFlags name files the commands write; inputFlags files they read.
var (
	outputFlags = map[string]bool{"csv": true, "json": true, "plot": true, "curves": true, "o": true, "output": true}
	inputFlags  = map[string]bool{"trace": true}
)

// checkOutputs refuses a command line whose output file names one of its
// input files (the scenario, a trace): an output never overwrites an
// input. args are the arguments after the command name, flags first.
func checkOutputs(args []string) error {
	type file struct{ flag, path string }
	var outs []file
	var ins []string
	kind := map[string]string{}
	for i := 0; i < len(args); i++ {
		a := args[i]
		if a == "--" {
			for _, p := range args[i+1:] {
				ins, kind[p] = append(ins, p), "scenario file"
			}
			break
		}
		if !strings.HasPrefix(a, "-") || len(a) == 1 {
			ins, kind[a] = append(ins, a), "scenario file"
			continue
		}
		name, value, hasValue := strings.Cut(strings.TrimLeft(a, "-"), "=")
		if !hasValue && valueFlags[name] && i+1 < len(args) {
			value = args[i+1]
			i++
		}
		switch {
		case outputFlags[name]:
			outs = append(outs, file{name, value})
		case inputFlags[name]:
			ins, kind[value] = append(ins, value), name+" file"
		}
	}
	for _, o := range outs {
		if in := outfile.SameAsAny(o.path, ins...); in != "" {
			dash := "--"
			if len(o.flag) == 1 {
				dash = "-"
			}
			return fmt.Errorf("%s%s %s is the %s %s: choose another name (an output never overwrites an input)", dash, o.flag, o.path, kind[in], in)
		}
	}
	return nil
}
