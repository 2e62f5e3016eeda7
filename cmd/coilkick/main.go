// Command coilkick simulates one actuation of a DC solenoid drive from a
// scenario file and reports pull-in, release, switch stress and clamp
// energy against the scenario's ratings.
//
// Exit status: 0 ok, 1 error (bad input, failed simulation, failed write,
// internal error), 2 only when a rating or requirement fails.
package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"os/signal"
	"path/filepath"
	"regexp"
	"runtime/debug"
	"strconv"
	"strings"
	"syscall"

	"github.com/urfave/cli/v2"
	"gopkg.in/yaml.v3"

	"coilkick"
	"coilkick/cmd/coilkick/outfile"
	"coilkick/cmd/coilkick/plot"
)

func main() {
	// A reader that closes the pipe early (coilkick sweep ... | head) makes
	// writes to standard output fail with EPIPE; run handles that. Without
	// this the runtime would kill the process with SIGPIPE, possibly before
	// the output files are written.
	signal.Ignore(syscall.SIGPIPE)
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

// valueFlags returns the names (aliases too) of cmd's flags that take a
// value, for reordering arguments; none for an unknown command.
func valueFlags(cmd *cli.Command) map[string]bool {
	names := map[string]bool{}
	if cmd == nil {
		return names
	}
	for _, f := range cmd.Flags {
		if tv, ok := f.(interface{ TakesValue() bool }); ok && tv.TakesValue() {
			for _, n := range f.Names() {
				names[n] = true
			}
		}
	}
	return names
}

// permute moves flags written after positional arguments in front of them,
// so that "coilkick run valve.yaml --csv out.csv" works: the flag parser
// stops at the first positional argument. valueFlags names the flags whose
// value is the next argument.
func permute(args []string, valueFlags map[string]bool) []string {
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

// run runs the command line args (args[0] is the program name) and returns
// the exit status: 0 ok, 1 an error (bad input, failed run, failed write,
// also a failed write to standard output and an internal error), 2 only
// when a rating or requirement fails.
//
// Standard output closed by its reader (EPIPE: "coilkick sweep ... |
// head") is not an error: printing stops quietly, the command finishes and
// writes its output files, and the status is the command's own.
func run(stdout, stderr io.Writer, args []string) (code int) {
	out := &stdoutGuard{w: stdout}
	defer func() {
		// A panic is a bug, never a verdict on the drive: status 1, not
		// the runtime's 2.
		if r := recover(); r != nil {
			fmt.Fprintf(stderr, "coilkick: internal error (a bug in coilkick, not a fault of the input): %v\n"+
				"Please report it with the command line and the input files. Details:\n%s", r, debug.Stack())
			code = exitError
		}
	}()
	code = runApp(out, stderr, args)
	if out.err != nil && !errors.Is(out.err, syscall.EPIPE) {
		fmt.Fprintf(stderr, "coilkick: standard output: %v\n", out.err)
		code = exitError
	}
	return code
}

// stdoutGuard passes writes to standard output on and records the first
// error; after it, writes are dropped and reported as done, so that a
// command goes on to finish its output files. run checks err at the end.
type stdoutGuard struct {
	w   io.Writer
	err error
}

func (g *stdoutGuard) Write(p []byte) (int, error) {
	if g.err != nil {
		return len(p), nil
	}
	if _, err := g.w.Write(p); err != nil {
		g.err = err
	}
	return len(p), nil
}

func runApp(stdout, stderr io.Writer, args []string) int {
	app := newApp(stdout, stderr)
	if len(args) > 2 {
		args = append(args[:2:2], permute(args[2:], valueFlags(app.Command(args[1])))...)
	}
	// The conventions of command-line tools, before the library sees the
	// arguments: no command prints the usage on stderr (exit 1); an unknown
	// command is an error naming the known ones; --version.
	if len(args) < 2 {
		fmt.Fprintln(stderr, "coilkick: no command given")
		printUsage(stderr, app)
		return exitError
	}
	switch first := args[1]; {
	case first == "--version" || first == "-version" || first == "version":
		fmt.Fprintf(stdout, "coilkick %s\n", version())
		return exitOK
	case strings.HasPrefix(first, "-") && first != "--help" && first != "-h":
		fmt.Fprintf(stderr, "coilkick: %s: flag before the command; the commands take their flags after them\n", first)
		printUsage(stderr, app)
		return exitError
	case !strings.HasPrefix(first, "-") && app.Command(first) == nil:
		fmt.Fprintf(stderr, "coilkick: unknown command %q; the commands are: %s\n", first, strings.Join(commandNames(app), ", "))
		return exitError
	}
	err := app.Run(args)
	var ue usageError
	switch {
	case err == nil:
		return exitOK
	case errors.Is(err, errFailing):
		return exitFailing
	case errors.As(err, &ue):
		fmt.Fprintf(stderr, "coilkick: %s\n", flagMessage(strings.TrimPrefix(ue.err.Error(), "coilkick: ")))
		if cmd := app.Command(ue.command); cmd != nil {
			fmt.Fprintf(stderr, "usage: coilkick %s [options] %s\n(coilkick help %s lists the options)\n", cmd.Name, cmd.ArgsUsage, cmd.Name)
		}
		return exitError
	default:
		// Library errors may carry the program's name already.
		fmt.Fprintf(stderr, "coilkick: %s\n", strings.TrimPrefix(err.Error(), "coilkick: "))
		return exitError
	}
}

// usageError is a command line the command cannot take (an unknown flag,
// a missing file argument): one line of reason and the command's usage.
type usageError struct {
	command string
	err     error
}

func (e usageError) Error() string { return e.err.Error() }
func (e usageError) Unwrap() error { return e.err }

// flagSyntax is the flag package's wording of a value it could not parse.
var flagSyntax = regexp.MustCompile(`^invalid value "(.*)" for flag -{1,2}([A-Za-z0-9-]+): (.*)$`)

// flagMessage rewords the flag package's "invalid value" error the way
// the rest of the program names a field: --flag "value": reason.
func flagMessage(msg string) string {
	if name, ok := strings.CutPrefix(msg, "flag provided but not defined: "); ok {
		name = strings.TrimLeft(name, "-")
		if len(name) == 1 {
			return fmt.Sprintf("-%s: no such option", name)
		}
		return fmt.Sprintf("--%s: no such option", name)
	}
	m := flagSyntax.FindStringSubmatch(msg)
	if m == nil {
		return msg
	}
	reason := m[3]
	switch reason {
	case "parse error":
		reason = "not a number"
		if _, err := strconv.ParseFloat(m[1], 64); err == nil {
			reason = "not a whole number"
		}
	case "value out of range":
		reason = "out of range"
	}
	return fmt.Sprintf("--%s %q: %s", m[2], m[1], reason)
}

// printUsage writes the list of commands.
func printUsage(w io.Writer, app *cli.App) {
	fmt.Fprintln(w, "usage: coilkick COMMAND [options] SCENARIO.yaml")
	fmt.Fprintln(w, "commands:")
	for _, c := range app.Commands {
		fmt.Fprintf(w, "  %-8s %s\n", c.Name, c.Usage)
	}
	fmt.Fprintln(w, "coilkick help COMMAND lists a command's options; coilkick --version prints the version.")
}

// commandNames lists the commands.
func commandNames(app *cli.App) []string {
	var out []string
	for _, c := range app.Commands {
		out = append(out, c.Name)
	}
	return out
}

// newApp builds the command line.
func newApp(stdout, stderr io.Writer) *cli.App {
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
					&cli.Float64Flag{Name: "tolerance", Usage: "relative tolerance of the integrator, 1e-12 to 1e-3", DefaultText: "the scenario's, else 1e-8"},
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
					&cli.StringFlag{Name: "currents", Usage: "currents of the family, comma-separated, in A or with a unit (\"0.2, 500 mA\")", DefaultText: "0.25 to 1.5 × rated"},
					&cli.StringFlag{Name: "plot", Usage: "plot force versus gap for the family, with spring + load, to `FILE` (.png or .svg)"},
					&cli.StringFlag{Name: "json", Usage: "write the figures and the force curves to `FILE` (- for standard output)"},
					&cli.StringFlag{Name: "csv", Usage: "write the figures to `FILE` as one CSV row (- for standard output)"},
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
					&cli.StringFlag{Name: "json", Usage: "write the study's figures and history to `FILE` (- for standard output)"},
				},
				Action: func(c *cli.Context) error { return cmdHeat(c, stdout) },
			},
			{
				Name:      "check",
				Usage:     "validate a scenario file without simulating",
				ArgsUsage: "SCENARIO.yaml",
				Flags: []cli.Flag{
					&cli.StringFlag{Name: "json", Usage: "write the verdict to `FILE` (- for standard output); nothing on an error"},
					&cli.StringFlag{Name: "csv", Usage: "write the verdict to `FILE` as one CSV row (- for standard output); nothing on an error"},
				},
				Action: func(c *cli.Context) error { return cmdCheck(c, stdout) },
			},
		}, append(append(studyCommands(stdout), signatureCommand(stdout), landCommand(stdout), storageCommand(stdout)), reportCommands(stdout)...)...),
	}
	ownHelp(app)
	for _, cmd := range app.Commands {
		// Every argument is checked before anything runs or is written.
		cmd.Before = checkArgs
		name := cmd.Name
		cmd.OnUsageError = func(_ *cli.Context, err error, _ bool) error {
			return usageError{command: name, err: err}
		}
	}
	app.OnUsageError = func(_ *cli.Context, err error, _ bool) error { return usageError{err: err} }
	return app
}

// ownHelp gives the app its own --help flags and help command in place of
// the CLI library's package-level ones, which every run of an app writes
// to (flag defaults, the help command's fields): commands run in parallel
// (the tests do) would race on them.
func ownHelp(app *cli.App) {
	helpFlag := func() cli.Flag {
		return &cli.BoolFlag{Name: "help", Aliases: []string{"h"}, Usage: "show help", DisableDefaultText: true}
	}
	app.HideHelp = true
	app.Flags = append(app.Flags, helpFlag())
	for _, cmd := range app.Commands {
		cmd.HideHelp, cmd.HideHelpCommand = true, true
		cmd.Flags = append(cmd.Flags, helpFlag())
	}
	app.Commands = append(app.Commands, &cli.Command{
		Name:            "help",
		Aliases:         []string{"h"},
		Usage:           "show the commands, or the help of one command",
		ArgsUsage:       "[COMMAND]",
		HideHelp:        true,
		HideHelpCommand: true,
		Action: func(c *cli.Context) error {
			parent := c.Lineage()[1]
			if name := c.Args().First(); name != "" {
				return cli.ShowCommandHelp(parent, name)
			}
			return cli.ShowAppHelp(parent)
		},
	})
}

// oneFile returns the single scenario argument.
func oneFile(c *cli.Context) (string, error) {
	if c.NArg() != 1 {
		return "", usageError{command: c.Command.Name,
			err: fmt.Errorf("%s needs exactly one scenario file, got %d arguments", c.Command.Name, c.NArg())}
	}
	return c.Args().First(), nil
}

// loadArg loads the model named by the command's single argument.
func loadArg(c *cli.Context) (string, *coilkick.Model, error) {
	sim, err := loadScenario(c)
	if err != nil {
		return "", nil, err
	}
	return sim.path, sim.md, nil
}

// simulation is the scenario of the command's single argument, parsed
// once, its model, and (after simulate) its run and assessment: the one
// path of run and report.
type simulation struct {
	path string
	sc   *coilkick.Scenario
	md   *coilkick.Model
	res  *coilkick.Result
	as   coilkick.Assessment
}

// loadScenario reads the command's scenario file and builds its model
// (coilkick.LoadModel, keeping the parsed scenario).
func loadScenario(c *cli.Context) (*simulation, error) {
	path, err := oneFile(c)
	if err != nil {
		return nil, err
	}
	sc, err := coilkick.Load(path)
	if err != nil {
		return nil, err
	}
	md, err := coilkick.Build(sc)
	if err != nil {
		return nil, err
	}
	return &simulation{path: path, sc: sc, md: md}, nil
}

// simulate runs the model at the command's --tolerance and assesses the
// run.
func (s *simulation) simulate(c *cli.Context) error {
	res, err := coilkick.Simulate(s.md, &coilkick.Options{Tolerance: c.Float64("tolerance")})
	if err != nil {
		return err
	}
	s.res, s.as = res, s.md.Assess(res)
	return nil
}

// cmdCheck validates the scenario. --json and --csv write the verdict
// ({header, "ok": true}; a CSV row ok=true); on an error nothing is
// written, the error goes to standard error and the status is 1.
func cmdCheck(c *cli.Context, w io.Writer) error {
	path, md, err := loadArg(c)
	if err != nil {
		return err
	}
	outs := newOutputs(w)
	if f := c.String("json"); f != "" {
		doc := struct {
			jsonHeader
			OK bool `json:"ok"`
		}{newHeader("check", md, path), true}
		outs.add(f, func(out io.Writer) error { return writeJSONDoc(out, doc) })
	}
	if f := c.String("csv"); f != "" {
		outs.add(f, func(out io.Writer) error { return writeCSVRows(out, []string{"ok"}, [][]string{{"true"}}) })
	}
	if err := outs.commit(); err != nil || c.String("json") == "-" || c.String("csv") == "-" {
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
	sim, err := loadScenario(c)
	if err != nil {
		return err
	}
	path, md := sim.path, sim.md
	from, to, windowed, err := plotWindow(c)
	if err != nil {
		return err
	}
	if windowed && (to <= 0 || from >= md.Timing.End) {
		return fmt.Errorf("--plot-window %q lies outside the run, which ends at %g ms (timing.end)", c.String("plot-window"), md.Timing.End*1e3)
	}
	if err := sim.simulate(c); err != nil {
		return err
	}
	res, as := sim.res, &sim.as
	outs := newOutputs(w)
	if f := c.String("csv"); f != "" {
		outs.add(f, func(out io.Writer) error { return writeCSV(out, &res.Trace) })
	}
	if f := c.String("json"); f != "" {
		outs.add(f, func(out io.Writer) error { return writeJSON(out, md, res, as) })
	}
	if f := c.String("plot"); f != "" {
		pr := res
		if windowed {
			if pr, err = cropResult(res, from, to, c.String("plot-window")); err != nil {
				return err
			}
		}
		if err := outs.addFigure(f, waveformFigure(path, md, pr)); err != nil {
			return err
		}
	}
	if err := outs.commit(); err != nil {
		return err
	}
	if !machineOnStdout(c) {
		printSummary(w, path, md, res, as)
	}
	if as.Failed() {
		return errFailing
	}
	return nil
}

// machineOnStdout reports whether --json or --csv is "-": standard output
// then carries that document alone, and the table is not printed.
func machineOnStdout(c *cli.Context) bool {
	return c.String("json") == "-" || c.String("csv") == "-"
}

// writeFile writes to the named file atomically (outfile.Write), or to w
// for "-".
func writeFile(name string, w io.Writer, write func(io.Writer) error) error {
	if name == "-" {
		return write(w)
	}
	return outfile.Write(name, write)
}

// outputs are the files a command writes, written together by commit
// (outfile.Set): each to a temporary file first, and renamed into place
// only when all were written, so that a failure (a full disk) changes
// none. "-" is standard output, written after the files.
type outputs struct {
	stdout   io.Writer
	files    outfile.Set
	toStdout []func(io.Writer) error
}

func newOutputs(stdout io.Writer) *outputs { return &outputs{stdout: stdout} }

// add queues the output name (a file, or "-").
func (o *outputs) add(name string, write func(io.Writer) error) {
	if name == "-" {
		o.toStdout = append(o.toStdout, write)
		return
	}
	o.files.Add(name, write)
}

// addFigure queues a figure, PNG or SVG by the file's extension.
func (o *outputs) addFigure(name string, fig *plot.Figure) error {
	write, err := fig.Encoder(name)
	if err != nil {
		return err
	}
	o.add(name, write)
	return nil
}

func (o *outputs) commit() error {
	if err := o.files.Commit(); err != nil {
		return err
	}
	for _, write := range o.toStdout {
		if err := write(o.stdout); err != nil {
			return err
		}
	}
	return nil
}

// Caps on the flags that scale the work and the memory. A larger value is
// refused with an error naming the flag, never left to run out of memory.
const (
	// maxWorkers: more parallel simulations than this gains nothing on
	// any machine this tool runs on and costs a goroutine stack each.
	maxWorkers = 256
	// maxSamples: Monte Carlo samples of corners; at 100 000 the 95 %
	// interval of a yield is already narrower than ±0.3 %, and each sample
	// is a full simulation.
	maxSamples = 100000
	// maxCurrents: currents of the magnet's force family.
	maxCurrents = 100
	// maxCurrentRatio: the largest current of the family, in multiples of
	// the rated current (supply / R).
	maxCurrentRatio = 100
)

// outputFlags name files the commands write, with the flag as it is
// written in messages; inputFlags files they read.
var (
	outputFlags = []struct{ name, shown string }{{"csv", "--csv"}, {"json", "--json"}, {"plot", "--plot"}, {"curves", "--curves"}, {"output", "-o"}}
	inputFlags  = []string{"trace"}
)

// checkArgs runs before every command, after its flags are parsed: it
// checks the flags' values and the output names, so that a bad argument is
// reported before anything is simulated or written.
func checkArgs(c *cli.Context) error {
	if err := checkFlagValues(c); err != nil {
		return err
	}
	return checkOutputs(c)
}

// checkFlagValues applies to the flags the rules of the scenario keys they
// stand for (solver.tolerance, ratings.hold force margin) and the caps:
// each flag given is checked by its flagChecks entry, in that order.
func checkFlagValues(c *cli.Context) error {
	for _, fc := range flagChecks {
		if c.IsSet(fc.flag) {
			if err := fc.check(c); err != nil {
				return err
			}
		}
	}
	return nil
}

// flagChecks check the value of a flag that is set.
var flagChecks = []struct {
	flag  string
	check func(c *cli.Context) error
}{
	{"tolerance", func(c *cli.Context) error {
		if tol := c.Float64("tolerance"); !(tol >= 1e-12 && tol <= 1e-3) {
			return fmt.Errorf("--tolerance %g: must be between 1e-12 and 1e-3 (as solver.tolerance in a scenario)", tol)
		}
		return nil
	}},
	{"margin", func(c *cli.Context) error {
		// the range of ratings.hold force margin (scenario_ratings.go)
		if m := c.Float64("margin"); !(m >= 0.01 && m <= 100) {
			return fmt.Errorf("--margin %g: must be from 0.01 to 100 (as ratings.hold force margin in a scenario), e.g. 1.2", m)
		}
		return nil
	}},
	{"samples", func(c *cli.Context) error {
		if n := c.Int("samples"); n < 0 || n > maxSamples {
			return fmt.Errorf("--samples %d: must be from 0 (no Monte Carlo) to %d", n, maxSamples)
		}
		return nil
	}},
	{"workers", func(c *cli.Context) error {
		if n := c.Int("workers"); n < 0 || n > maxWorkers {
			return fmt.Errorf("--workers %d: must be from 0 (all cores) to %d", n, maxWorkers)
		}
		return nil
	}},
	{"currents", func(c *cli.Context) error {
		_, err := parseCurrents(c.String("currents"))
		return err
	}},
	{"plot-window", func(c *cli.Context) error {
		if c.String("plot") == "" {
			return fmt.Errorf("--plot-window %q: needs --plot (the window is of the plot)", c.String("plot-window"))
		}
		_, _, _, err := plotWindow(c)
		return err
	}},
	{"figure", func(c *cli.Context) error {
		if _, _, ok := sweepFigure(c.String("figure"), coilkick.SweepFigures{}); !ok {
			return fmt.Errorf("--figure %q: unknown figure; expected one of: %s", c.String("figure"), strings.Join(sweepFigureNames, ", "))
		}
		return nil
	}},
	{"vary", func(c *cli.Context) error {
		_, err := parseVaries(c)
		return err
	}},
}

// parseVaries reads the --vary flags and checks the grid's size.
func parseVaries(c *cli.Context) ([]coilkick.Vary, error) {
	var vs []coilkick.Vary
	points := 1
	for _, spec := range c.StringSlice("vary") {
		v, err := coilkick.ParseVary(spec)
		if err != nil {
			return nil, err
		}
		if n := len(v.Values); n > 0 && points > coilkick.MaxSweepPoints/n {
			return nil, fmt.Errorf("--vary: the sweep has more than %d points (the product of the numbers of values of its keys); sweep fewer values", coilkick.MaxSweepPoints)
		} else if n > 0 {
			points *= n
		}
		vs = append(vs, v)
	}
	return vs, nil
}

// plotWindow reads --plot-window "FROM:TO" (ms) into seconds; ok is false
// when the flag is not given.
func plotWindow(c *cli.Context) (from, to float64, ok bool, err error) {
	win := c.String("plot-window")
	if win == "" {
		return 0, 0, false, nil
	}
	a, b, found := strings.Cut(win, ":")
	from, err1 := timeFlag(a)
	to, err2 := timeFlag(b)
	if !found || err1 != nil || err2 != nil || !(to > from) {
		return 0, 0, false, fmt.Errorf("--plot-window %q: expected FROM:TO, each a plain number in ms or a time with its unit (\"2 ms:40 ms\"), finite, with FROM < TO", win)
	}
	return from, to, true, nil
}

// timeFlag reads a time (s) from a flag: a plain number in ms, or a
// quantity with its unit through the scenario files' unit parser.
func timeFlag(s string) (float64, error) {
	s = strings.TrimSpace(s)
	v, err := strconv.ParseFloat(s, 64)
	if err == nil {
		v *= 1e-3
	} else {
		v, err = coilkick.ParseQuantity(s, coilkick.Time)
	}
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("%q is not a time", s)
	}
	return v, nil
}

// parseCurrents reads --currents: comma-separated currents, each a plain
// number in A or a quantity with its unit ("0.2, 500 mA"), at most
// maxCurrents of them, finite and not negative.
func parseCurrents(txt string) ([]float64, error) {
	fields := strings.Split(txt, ",")
	if len(fields) > maxCurrents {
		return nil, fmt.Errorf("--currents: %d currents; at most %d", len(fields), maxCurrents)
	}
	var out []float64
	for _, f := range fields {
		s := strings.TrimSpace(f)
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			v, err = coilkick.ParseQuantity(s, coilkick.Current)
		}
		if err != nil || !(v >= 0) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("--currents: %q is not a current (a number in A, or with a unit such as \"500 mA\"), finite and not negative", s)
		}
		out = append(out, v)
	}
	return out, nil
}

// checkOutputs refuses, before anything runs, output names that cannot be
// written (a plot that is not .png or .svg, a report that is not .html, a
// missing or read-only folder, a folder or a device as the target), two
// outputs onto one file, and an output that names one of the command's
// input files: the scenario, the files it refers to (flux table, steel
// curve), a trace. Paths are compared with symbolic links followed.
func checkOutputs(c *cli.Context) error {
	var outs []namedOutput
	for _, f := range outputFlags {
		if v := c.String(f.name); v != "" {
			outs = append(outs, namedOutput{f.shown, v})
		}
	}
	if len(outs) == 0 {
		return nil
	}
	// First the worst mistake: an output onto an input.
	ins, kind := commandInputs(c)
	for _, o := range outs {
		if in := outfile.SameAsAny(o.path, ins...); in != "" {
			return fmt.Errorf("%s %s is the %s: choose another name (an output never overwrites an input)", o.flag, o.path, kind[in])
		}
	}
	stdoutBy := ""
	for k, o := range outs {
		switch {
		case o.path == "-" && o.flag == "--plot":
			return fmt.Errorf("--plot -: plots are written to a file (.png or .svg), not to standard output")
		case o.path == "-" && stdoutBy != "":
			return fmt.Errorf("%s - and %s - both write to standard output; give one of them a file", stdoutBy, o.flag)
		case o.path == "-":
			stdoutBy = o.flag
			continue
		}
		for _, p := range outs[:k] {
			if p.path != "-" && outfile.SameAsAny(o.path, p.path) != "" {
				return fmt.Errorf("%s %s and %s %s name the same file: give each output its own name", p.flag, p.path, o.flag, o.path)
			}
		}
		if err := checkOutputFile(c, o); err != nil {
			return err
		}
	}
	return nil
}

// namedOutput is an output file with the flag that names it (as written
// in messages).
type namedOutput struct{ flag, path string }

// commandInputs lists the command's input files (the scenarios, the files
// they refer to, the files of inputFlags) and describes each for
// messages.
func commandInputs(c *cli.Context) ([]string, map[string]string) {
	kind := map[string]string{}
	var ins []string
	addIn := func(p, what string) {
		if _, ok := kind[p]; !ok && p != "" {
			ins, kind[p] = append(ins, p), what
		}
	}
	for _, p := range c.Args().Slice() {
		addIn(p, "scenario file "+p)
		for _, ref := range scenarioFiles(p, c) {
			addIn(ref.path, ref.what)
		}
	}
	for _, name := range inputFlags {
		addIn(c.String(name), name+" file "+c.String(name))
	}
	return ins, kind
}

// checkOutputFile refuses an output file that cannot be written: a plot
// that is not .png or .svg, a report that is not .html, a target that
// outfile.Check refuses.
func checkOutputFile(c *cli.Context, o namedOutput) error {
	if o.flag == "--plot" {
		if err := plot.CheckFileName(o.path); err != nil {
			return fmt.Errorf("--plot %s: %v", o.path, err)
		}
	}
	if o.flag == "-o" && c.Command.Name == "report" {
		if ext := strings.ToLower(filepath.Ext(o.path)); ext != ".html" && ext != ".htm" {
			return fmt.Errorf("-o %s: the report is HTML; name it .html (or - for standard output)", o.path)
		}
	}
	if err := outfile.Check(o.path); err != nil {
		return fmt.Errorf("%s: %v", o.flag, err)
	}
	return nil
}

// scenarioFile is a file a scenario refers to, with its description for
// messages (naming the file and the key).
type scenarioFile struct{ path, what string }

// scenarioFiles lists the files the scenario at path refers to (its flux
// table, its steel curve) and, for a sweep, the files --vary puts in their
// place, resolved against the scenario's folder. It reads the file
// leniently: a scenario it cannot read or parse lists nothing here (the
// loader reports it).
func scenarioFiles(path string, c *cli.Context) []scenarioFile {
	data, err := coilkick.ReadInput(path, "scenario", coilkick.MaxScenarioBytes)
	if err != nil {
		return nil
	}
	var doc yaml.Node
	if yaml.Unmarshal(data, &doc) != nil || len(doc.Content) == 0 {
		return nil
	}
	dir := filepath.Dir(path)
	resolve := func(f string) string {
		if f = strings.TrimSpace(f); f != "" && !filepath.IsAbs(f) {
			f = filepath.Join(dir, f)
		}
		return f
	}
	keys := []struct {
		key  []string
		what string
	}{
		{[]string{"magnet", coilkick.MagnetTable, "file"}, "flux-linkage table"},
		{[]string{"magnet", coilkick.MagnetGeom, "steel curve", "file"}, "steel curve"},
	}
	var out []scenarioFile
	for _, k := range keys {
		key := strings.Join(k.key, ".")
		if n := yamlLookup(doc.Content[0], k.key); n != nil && n.Kind == yaml.ScalarNode {
			f := resolve(n.Value)
			out = append(out, scenarioFile{f, fmt.Sprintf("scenario's %s %s (%s)", k.what, f, key)})
		}
		if !c.IsSet("vary") {
			continue
		}
		vs, _ := parseVaries(c)
		for _, v := range vs {
			if v.Key == key {
				for _, val := range v.Values {
					f := resolve(val)
					out = append(out, scenarioFile{f, fmt.Sprintf("%s %s that --vary puts in %s", k.what, f, key)})
				}
			}
		}
	}
	return out
}

// yamlLookup follows a path of mapping keys from n.
func yamlLookup(n *yaml.Node, path []string) *yaml.Node {
	for _, key := range path {
		if n.Kind != yaml.MappingNode {
			return nil
		}
		var next *yaml.Node
		for i := 0; i+1 < len(n.Content); i += 2 {
			if strings.TrimSpace(n.Content[i].Value) == key {
				next = n.Content[i+1]
			}
		}
		if next == nil {
			return nil
		}
		n = next
	}
	return n
}
