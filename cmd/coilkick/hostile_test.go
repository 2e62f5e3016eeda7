package main

import (
	"bytes"
	"crypto/sha256"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"os/exec"
	"os/signal"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"
)

// Hostile command lines: bad flag values, outputs onto inputs (also through
// symbolic links and the scenario's own table and steel curve), the same
// output twice, bad output names, special files as inputs and outputs,
// huge counts, and standard output that fails or is closed. Each case
// asserts the exit status, that the message names the flag or file, and
// that no file of its folder was created, changed or left half-written.

// TestMain lets a test run the command as its own process (main, with its
// signal handling and exit status): with COILKICK_TEST_MAIN=1 the test
// binary is coilkick, its arguments the command line. COILKICK_TEST_FSIZE
// limits the size of any file the process writes (RLIMIT_FSIZE), as a full
// disk or a quota does. Otherwise it makes sharedDir for the tests'
// shared outputs (fixtures_test.go).
func TestMain(m *testing.M) {
	if os.Getenv("COILKICK_TEST_MAIN") == "1" {
		if n, err := strconv.ParseUint(os.Getenv("COILKICK_TEST_FSIZE"), 10, 64); err == nil {
			signal.Ignore(syscall.SIGXFSZ) // a write past the limit fails with EFBIG instead
			if err := syscall.Setrlimit(syscall.RLIMIT_FSIZE, &syscall.Rlimit{Cur: n, Max: n}); err != nil {
				fmt.Fprintln(os.Stderr, "setrlimit:", err)
				os.Exit(99)
			}
		}
		os.Args = append([]string{"coilkick"}, os.Args[1:]...)
		main()
		return
	}
	dir, err := os.MkdirTemp("", "coilkick-test-")
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	sharedDir = dir
	code := m.Run()
	os.RemoveAll(dir)
	os.Exit(code)
}

// hostileDir makes a folder with the inputs the cases use, all with an old
// modification time: valve.yaml (a demo), table-valve.yaml and its
// table_flux.csv, steel-curve-valve.yaml and its steel_bh.csv, trace.csv,
// old outputs (old.csv, old.json, old.png), links (link.yaml to the
// scenario, flux-link.csv to the table, up/ to the folder itself), a FIFO
// and an empty folder.
func hostileDir(t *testing.T) string {
	t.Helper()
	d := t.TempDir()
	copyFile := func(from, to string) {
		data, err := os.ReadFile(from)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(d, to), data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	copyFile("../../scenarios/irrigation-valve.yaml", "valve.yaml")
	for _, f := range []string{"table-valve.yaml", "table_flux.csv", "steel-curve-valve.yaml", "steel_bh.csv"} {
		copyFile(filepath.Join("testdata/hostile", f), f)
	}
	copyFile("../../testdata/fit/irrigation-scope.csv", "trace.csv")
	for _, f := range []string{"old.csv", "old.json", "old.png"} {
		os.WriteFile(filepath.Join(d, f), []byte("old content of "+f+"\n"), 0o644)
	}
	for _, l := range [][2]string{{"valve.yaml", "link.yaml"}, {"table_flux.csv", "flux-link.csv"}, {".", "up"}} {
		if err := os.Symlink(l[0], filepath.Join(d, l[1])); err != nil {
			t.Fatal(err)
		}
	}
	if err := syscall.Mkfifo(filepath.Join(d, "fifo"), 0o644); err != nil {
		t.Fatal(err)
	}
	os.Mkdir(filepath.Join(d, "folder"), 0o755)
	old := time.Date(2020, 1, 2, 3, 4, 5, 0, time.UTC)
	filepath.WalkDir(d, func(p string, e fs.DirEntry, err error) error {
		if err == nil && e.Type()&fs.ModeSymlink == 0 {
			os.Chtimes(p, old, old)
		}
		return nil
	})
	return d
}

// snapshot describes every entry of a folder (not following links): type,
// size, modification time and a hash of a regular file's content.
func snapshot(t *testing.T, d string) map[string]string {
	t.Helper()
	out := map[string]string{}
	filepath.WalkDir(d, func(p string, e fs.DirEntry, err error) error {
		if err != nil || p == d {
			return nil
		}
		st, err := os.Lstat(p)
		if err != nil {
			return nil
		}
		desc := fmt.Sprintf("%v %d %d", st.Mode(), st.Size(), st.ModTime().UnixNano())
		if st.Mode().IsRegular() {
			data, _ := os.ReadFile(p)
			desc += fmt.Sprintf(" %x", sha256.Sum256(data))
		}
		rel, _ := filepath.Rel(d, p)
		out[rel] = desc
		return nil
	})
	return out
}

// changes lists the entries created, removed or changed between two
// snapshots.
func changes(before, after map[string]string) []string {
	var out []string
	for k, v := range after {
		if w, ok := before[k]; !ok {
			out = append(out, "created "+k)
		} else if v != w {
			out = append(out, "changed "+k)
		}
	}
	for k := range before {
		if _, ok := after[k]; !ok {
			out = append(out, "removed "+k)
		}
	}
	sort.Strings(out)
	return out
}

// runTimed runs the command line in process, failing the test if it has
// not returned within the limit (a FIFO that blocks, say).
func runTimed(t *testing.T, stdout io.Writer, args []string) (int, string) {
	t.Helper()
	var errb bytes.Buffer
	done := make(chan int, 1)
	go func() { done <- run(stdout, &errb, append([]string{"coilkick"}, args...)) }()
	select {
	case code := <-done:
		return code, errb.String()
	case <-time.After(2 * time.Minute):
		t.Fatalf("%v did not return within 2 minutes", args)
		return 0, ""
	}
}

type hostileCase struct {
	name string
	// args with $D for the fixture folder.
	args []string
	code int
	// stderr must contain each of these ($D replaced); the flag or the
	// file at fault.
	stderr []string
	// quiet: refused before any work, so nothing on standard output.
	quiet bool
	// created: files the command may create (exit 0 cases); every other
	// entry of the folder must stay as it was.
	created []string
	// device: the case needs the device node $D/null (skipped where
	// device nodes cannot be made).
	device bool
}

func hostileCases() []hostileCase {
	const v = "$D/valve.yaml"
	vary := "supply.voltage=22 V:26 V:3"
	return []hostileCase{
		// Flags get the rules of the scenario keys they stand for.
		{name: "tolerance NaN", args: []string{"run", v, "--tolerance", "NaN", "--csv", "$D/old.csv"}, code: 1, stderr: []string{"--tolerance NaN", "1e-12 and 1e-3"}, quiet: true},
		{name: "tolerance -1", args: []string{"run", v, "--tolerance", "-1"}, code: 1, stderr: []string{"--tolerance -1"}, quiet: true},
		{name: "tolerance Inf", args: []string{"run", v, "--tolerance", "Inf"}, code: 1, stderr: []string{"--tolerance +Inf"}, quiet: true},
		{name: "tolerance 1", args: []string{"report", v, "--tolerance", "1", "-o", "$D/r.html"}, code: 1, stderr: []string{"--tolerance 1:"}, quiet: true},
		{name: "tolerance 1e-30", args: []string{"run", v, "--tolerance", "1e-30"}, code: 1, stderr: []string{"--tolerance 1e-30"}, quiet: true},
		{name: "margin NaN", args: []string{"solve", v, "--margin", "NaN"}, code: 1, stderr: []string{"--margin NaN"}, quiet: true},
		{name: "margin -1", args: []string{"solve", v, "--margin", "-1"}, code: 1, stderr: []string{"--margin -1"}, quiet: true},
		// the range of ratings.hold force margin, 0.01 to 100: 1e-9 printed "force margin 0.00" and a holding current
		{name: "margin 1e-9", args: []string{"solve", v, "--margin", "1e-9"}, code: 1, stderr: []string{"--margin 1e-09", "0.01 to 100"}, quiet: true},
		{name: "margin 1e9", args: []string{"solve", v, "--margin", "1e9"}, code: 1, stderr: []string{"--margin 1e+09", "0.01 to 100"}, quiet: true},
		{name: "margin at the range's ends", args: []string{"solve", v, "--margin", "0.01", "--json", "$D/m.json"}, code: 0, created: []string{"m.json"}},
		{name: "samples -5", args: []string{"corners", "../../scenarios/door-strike-duty.yaml", "--samples", "-5"}, code: 1, stderr: []string{"--samples -5"}, quiet: true},
		{name: "samples 1e9", args: []string{"corners", "../../scenarios/door-strike-duty.yaml", "--samples", "1000000000"}, code: 1, stderr: []string{"--samples 1000000000", "100000"}, quiet: true},
		{name: "samples not a whole number", args: []string{"corners", "../../scenarios/door-strike-duty.yaml", "--samples", "1e9"}, code: 1, stderr: []string{"samples"}},
		{name: "seed negative", args: []string{"corners", "../../scenarios/door-strike-duty.yaml", "--seed", "-1"}, code: 1, stderr: []string{"seed"}},
		{name: "workers 1e6", args: []string{"sweep", v, "--vary", vary, "--workers", "1000000", "--csv", "$D/old.csv"}, code: 1, stderr: []string{"--workers 1000000", "256"}, quiet: true},
		{name: "workers negative", args: []string{"sweep", v, "--vary", vary, "--workers", "-3"}, code: 1, stderr: []string{"--workers -3"}, quiet: true},
		{name: "sweep grid too large", args: []string{"sweep", v, "--vary", "supply.voltage=20 V:30 V:1001", "--vary", "plunger.mass=5 g:9 g:1001", "--csv", "$D/s.csv"}, code: 1, stderr: []string{"--vary", "1000000 points"}, quiet: true},
		{name: "same sweep key twice", args: []string{"sweep", v, "--vary", vary, "--vary", "supply.voltage=20 V,21 V", "--csv", "$D/s.csv"}, code: 1, stderr: []string{"--vary", "supply.voltage", "twice"}, quiet: true},
		{name: "too many currents", args: []string{"magnet", v, "--currents", strings.Repeat("0.1,", 999) + "0.1", "--curves", "$D/c.csv"}, code: 1, stderr: []string{"--currents", "at most 100"}, quiet: true},
		{name: "current NaN", args: []string{"magnet", v, "--currents", "0.1,NaN"}, code: 1, stderr: []string{"--currents", `"NaN"`}, quiet: true},
		{name: "current overflows", args: []string{"magnet", v, "--currents", "1e400"}, code: 1, stderr: []string{"--currents", `"1e400"`}, quiet: true},
		{name: "current in volts", args: []string{"magnet", v, "--currents", "2 V"}, code: 1, stderr: []string{"--currents", `"2 V"`}, quiet: true},
		{name: "current far above rated", args: []string{"magnet", v, "--currents", "1 kA", "--curves", "$D/c.csv"}, code: 1, stderr: []string{"--currents", "rated current"}, quiet: true},
		{name: "plot window reversed", args: []string{"run", v, "--plot", "$D/w.png", "--plot-window", "5:1", "--json", "$D/old.json"}, code: 1, stderr: []string{"--plot-window", `"5:1"`}, quiet: true},
		{name: "plot window NaN", args: []string{"run", v, "--plot", "$D/w.png", "--plot-window", "NaN:5"}, code: 1, stderr: []string{"--plot-window", "NaN:5"}, quiet: true},
		{name: "plot window without plot", args: []string{"run", v, "--plot-window", "0:20"}, code: 1, stderr: []string{"--plot-window", "needs --plot"}, quiet: true},
		{name: "plot window after the run", args: []string{"run", v, "--plot", "$D/old.png", "--plot-window", "5000:6000", "--json", "$D/old.json"}, code: 1, stderr: []string{"--plot-window", "outside the run"}, quiet: true},
		{name: "unknown figure", args: []string{"sweep", v, "--vary", vary, "--figure", "colour", "--csv", "$D/s.csv"}, code: 1, stderr: []string{"--figure", "colour"}, quiet: true},

		// Output names are checked before anything runs or is written.
		{name: "bad plot extension after --json", args: []string{"run", v, "--json", "$D/old.json", "--plot", "$D/x.txt"}, code: 1, stderr: []string{"--plot $D/x.txt", ".png or .svg"}, quiet: true},
		{name: "sweep plot extension", args: []string{"sweep", v, "--vary", vary, "--csv", "$D/old.csv", "--plot", "$D/x.pdf"}, code: 1, stderr: []string{"--plot $D/x.pdf"}, quiet: true},
		{name: "clamps plot extension", args: []string{"clamps", v, "--plot", "$D/x"}, code: 1, stderr: []string{"--plot $D/x"}, quiet: true},
		{name: "plot to standard output", args: []string{"run", v, "--plot", "-"}, code: 1, stderr: []string{"--plot -"}, quiet: true},
		{name: "report not HTML", args: []string{"report", v, "-o", "$D/report.txt"}, code: 1, stderr: []string{"-o $D/report.txt", "HTML"}, quiet: true},
		{name: "output folder missing", args: []string{"run", v, "--csv", "$D/nowhere/x.csv"}, code: 1, stderr: []string{"--csv", "$D/nowhere/x.csv"}, quiet: true},
		{name: "output is a folder", args: []string{"run", v, "--csv", "$D/folder"}, code: 1, stderr: []string{"--csv", "$D/folder is a folder"}, quiet: true},
		{name: "output is a FIFO", args: []string{"heat", "../../scenarios/door-strike-duty.yaml", "--csv", "$D/fifo"}, code: 1, stderr: []string{"--csv", "$D/fifo is not a regular file"}, quiet: true},
		// A device node made in the folder (as /dev/null), never a real one:
		// a regression would replace it.
		{name: "output is a device", args: []string{"run", v, "--json", "$D/null"}, code: 1, stderr: []string{"--json", "$D/null is not a regular file"}, quiet: true, device: true},
		{name: "output under a file", args: []string{"run", v, "--csv", "$D/old.csv/x.csv"}, code: 1, stderr: []string{"--csv", "old.csv"}, quiet: true},
		{name: "two outputs one file", args: []string{"run", v, "--csv", "$D/old.csv", "--json", "$D/old.csv"}, code: 1, stderr: []string{"--csv $D/old.csv and --json $D/old.csv", "same file"}, quiet: true},
		{name: "two outputs one new file by two paths", args: []string{"sweep", v, "--vary", vary, "--csv", "$D/s.out", "--json", "$D/up/s.out"}, code: 1, stderr: []string{"same file"}, quiet: true},
		{name: "two outputs on standard output", args: []string{"run", v, "--csv", "-", "--json", "-"}, code: 1, stderr: []string{"--csv - and --json -", "standard output"}, quiet: true},

		// An output never overwrites an input.
		{name: "csv onto the scenario", args: []string{"run", v, "--csv", v}, code: 1, stderr: []string{"--csv $D/valve.yaml is the scenario file", "never overwrites"}, quiet: true},
		{name: "report onto the scenario", args: []string{"report", v, "-o", v}, code: 1, stderr: []string{"-o $D/valve.yaml is the scenario file"}, quiet: true},
		{name: "scenario by a link", args: []string{"run", "$D/link.yaml", "--json", v}, code: 1, stderr: []string{"--json $D/valve.yaml is the scenario file $D/link.yaml"}, quiet: true},
		{name: "output by a link", args: []string{"run", v, "--csv", "$D/link.yaml"}, code: 1, stderr: []string{"--csv $D/link.yaml is the scenario file"}, quiet: true},
		{name: "output through a linked folder", args: []string{"run", v, "--csv", "$D/up/valve.yaml"}, code: 1, stderr: []string{"--csv $D/up/valve.yaml is the scenario file"}, quiet: true},
		{name: "magnet curves onto the flux table", args: []string{"magnet", "$D/table-valve.yaml", "--curves", "$D/table_flux.csv"}, code: 1, stderr: []string{"--curves $D/table_flux.csv is the scenario's flux-linkage table $D/table_flux.csv (magnet.table.file)"}, quiet: true},
		{name: "run csv onto the table by a link", args: []string{"run", "$D/table-valve.yaml", "--csv", "$D/flux-link.csv"}, code: 1, stderr: []string{"--csv $D/flux-link.csv", "magnet.table.file"}, quiet: true},
		{name: "curves onto the steel curve", args: []string{"magnet", "$D/steel-curve-valve.yaml", "--curves", "$D/steel_bh.csv"}, code: 1, stderr: []string{"--curves $D/steel_bh.csv is the scenario's steel curve $D/steel_bh.csv (magnet.geometry.steel curve.file)"}, quiet: true},
		{name: "sweep csv onto a swept table", args: []string{"sweep", "$D/table-valve.yaml", "--vary", "magnet.table.file=table_flux.csv,other.csv", "--csv", "$D/other.csv"}, code: 1, stderr: []string{"--csv $D/other.csv", "--vary", "magnet.table.file"}, quiet: true},
		{name: "heat csv onto the scenario", args: []string{"heat", v, "--csv", v}, code: 1, stderr: []string{"--csv $D/valve.yaml is the scenario file"}, quiet: true},
		{name: "fit csv onto the trace", args: []string{"fit", v, "--trace", "$D/trace.csv", "--csv", "$D/trace.csv"}, code: 1, stderr: []string{"--csv $D/trace.csv is the trace file"}, quiet: true},
		{name: "fit output onto the scenario", args: []string{"fit", v, "--trace", "$D/trace.csv", "-o", v}, code: 1, stderr: []string{"-o $D/valve.yaml is the scenario file"}, quiet: true},

		// Special files as inputs: refused at once, never read or waited on.
		{name: "FIFO as the scenario", args: []string{"check", "$D/fifo"}, code: 1, stderr: []string{"$D/fifo", "not a regular file"}, quiet: true},
		{name: "FIFO as the scenario of a run with outputs", args: []string{"run", "$D/fifo", "--csv", "$D/out.csv", "--json", "$D/old.json"}, code: 1, stderr: []string{"$D/fifo", "not a regular file"}, quiet: true},
		{name: "FIFO as the sweep's scenario", args: []string{"sweep", "$D/fifo", "--vary", vary}, code: 1, stderr: []string{"$D/fifo", "not a regular file"}, quiet: true},
		{name: "/dev/zero as the scenario", args: []string{"check", "/dev/zero"}, code: 1, stderr: []string{"/dev/zero", "not a regular file"}, quiet: true},
		{name: "folder as the scenario", args: []string{"run", "$D/folder"}, code: 1, stderr: []string{"$D/folder"}, quiet: true},
		{name: "FIFO as the trace", args: []string{"fit", v, "--trace", "$D/fifo"}, code: 1, stderr: []string{"$D/fifo", "not a regular file"}},

		// Good command lines next to the bad ones: they write what they
		// were asked to and nothing else.
		{name: "outputs replaced when all is well", args: []string{"run", v, "--csv", "$D/old.csv", "--json", "$D/old.json", "--plot", "$D/old.png"}, code: 0, created: []string{"old.csv", "old.json", "old.png"}},
		{name: "output through a link to a new name", args: []string{"sweep", v, "--vary", vary, "--csv", "$D/up/s.csv"}, code: 0, created: []string{"s.csv"}},
	}
}

func TestHostileCommandLines(t *testing.T) {
	t.Parallel()
	for _, c := range hostileCases() {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			d := hostileDir(t)
			if c.device {
				// The numbers of /dev/null (Linux): character device 1, 3.
				if err := syscall.Mknod(filepath.Join(d, "null"), syscall.S_IFCHR|0o666, 1<<8|3); err != nil {
					t.Skipf("no device node: %v", err)
				}
			}
			sub := func(s string) string { return strings.ReplaceAll(s, "$D", d) }
			args := make([]string, len(c.args))
			for k, a := range c.args {
				args[k] = sub(a)
			}
			before := snapshot(t, d)
			var out bytes.Buffer
			code, stderr := runTimed(t, &out, args)
			if code != c.code {
				t.Fatalf("%v: exit %d, want %d\nstderr: %s", args, code, c.code, stderr)
			}
			for _, s := range c.stderr {
				if !strings.Contains(stderr, sub(s)) {
					t.Errorf("stderr lacks %q:\n%s", sub(s), stderr)
				}
			}
			if strings.Contains(stderr, "coilkick: coilkick:") {
				t.Errorf("doubled prefix: %s", stderr)
			}
			if c.quiet && out.Len() > 0 {
				t.Errorf("refused, yet printed:\n%s", out.String())
			}
			var unexpected []string
			allowed := map[string]bool{}
			for _, f := range c.created {
				allowed["created "+f], allowed["changed "+f] = true, true
			}
			for _, ch := range changes(before, snapshot(t, d)) {
				if !allowed[ch] {
					unexpected = append(unexpected, ch)
				}
			}
			if len(unexpected) > 0 {
				t.Errorf("files touched: %v", unexpected)
			}
			for _, f := range c.created {
				if data, err := os.ReadFile(filepath.Join(d, f)); err != nil || bytes.HasPrefix(data, []byte("old content")) {
					t.Errorf("%s not written", f)
				}
			}
		})
	}
}

// failingWriter fails every write with err.
type failingWriter struct{ err error }

func (f failingWriter) Write([]byte) (int, error) { return 0, f.err }

// panickingWriter stands for a bug anywhere below run.
type panickingWriter struct{}

func (panickingWriter) Write([]byte) (int, error) { panic("a bug") }

// TestStandardOutputFails: a failed write to standard output is an error
// (exit 1, named); a closed pipe is not (the reader stopped reading): the
// command finishes quietly with its status and complete files. Both
// write the requested files in full.
func TestStandardOutputFails(t *testing.T) {
	t.Parallel()
	d := t.TempDir()
	args := func(csv string) []string {
		return []string{"sweep", "../../scenarios/irrigation-valve.yaml", "--vary", "supply.voltage=22 V:26 V:3", "--csv", csv}
	}
	ref := filepath.Join(d, "ref.csv")
	if code, stderr := runTimed(t, io.Discard, args(ref)); code != exitOK {
		t.Fatalf("reference sweep: exit %d: %s", code, stderr)
	}
	want, _ := os.ReadFile(ref)
	for _, c := range []struct {
		name   string
		err    error
		code   int
		stderr string
	}{
		{"disk full", syscall.ENOSPC, exitError, "standard output: no space left on device"},
		{"input-output error", syscall.EIO, exitError, "standard output: input/output error"},
		{"closed pipe", syscall.EPIPE, exitOK, ""},
	} {
		csv := filepath.Join(d, strings.ReplaceAll(c.name, " ", "-")+".csv")
		code, stderr := runTimed(t, failingWriter{c.err}, args(csv))
		if code != c.code || (c.stderr == "" && stderr != "") || !strings.Contains(stderr, c.stderr) {
			t.Errorf("%s: exit %d, stderr %q; want exit %d and %q", c.name, code, stderr, c.code, c.stderr)
		}
		if got, _ := os.ReadFile(csv); !bytes.Equal(got, want) {
			t.Errorf("%s: the CSV is not complete (%d bytes, want %d)", c.name, len(got), len(want))
		}
	}
	// A failed write does not turn a failing rating into status 2 either:
	// the output was lost.
	if code, _ := runTimed(t, failingWriter{syscall.ENOSPC}, []string{"run", "../../scenarios/door-latch.yaml"}); code != exitError {
		t.Errorf("failing demo to a full standard output: exit %d, want %d", code, exitError)
	}
	if code, _ := runTimed(t, failingWriter{syscall.EPIPE}, []string{"run", "../../scenarios/door-latch.yaml"}); code != exitFailing {
		t.Errorf("failing demo to a closed pipe: exit %d, want the command's %d", code, exitFailing)
	}
}

// TestPanicIsAnInternalError: a panic below run exits 1 with a message
// that says it is a bug, never with the runtime's status 2.
func TestPanicIsAnInternalError(t *testing.T) {
	t.Parallel()
	code, stderr := runTimed(t, panickingWriter{}, []string{"check", "../../scenarios/irrigation-valve.yaml"})
	if code != exitError || !strings.Contains(stderr, "coilkick: internal error") || !strings.Contains(stderr, "a bug") {
		t.Errorf("exit %d, stderr %q; want %d and an internal-error message", code, stderr, exitError)
	}
}

// command runs coilkick as its own process (see TestMain).
func command(t *testing.T, fsize int64, args ...string) *exec.Cmd {
	t.Helper()
	cmd := exec.Command(os.Args[0], args...)
	cmd.Env = append(os.Environ(), "COILKICK_TEST_MAIN=1")
	if fsize > 0 {
		cmd.Env = append(cmd.Env, "COILKICK_TEST_FSIZE="+strconv.FormatInt(fsize, 10))
	}
	return cmd
}

// exitStatus is the process's exit status, or -signal when a signal
// ended it.
func exitStatus(t *testing.T, err error) int {
	t.Helper()
	var ee *exec.ExitError
	switch {
	case err == nil:
		return 0
	case errors.As(err, &ee):
		if ws, ok := ee.Sys().(syscall.WaitStatus); ok && ws.Signaled() {
			return -int(ws.Signal())
		}
		return ee.ExitCode()
	}
	t.Fatal(err)
	return 0
}

// TestProcessStandardOutput runs the binary with standard output on
// /dev/full (exit 1, named) and on a pipe whose reader has gone
// ("coilkick sweep ... --csv f | head": no death by SIGPIPE, exit status
// the command's, files complete).
func TestProcessStandardOutput(t *testing.T) {
	t.Parallel()
	d := t.TempDir()
	full, err := os.OpenFile("/dev/full", os.O_WRONLY, 0)
	if err != nil {
		t.Skip(err)
	}
	defer full.Close()
	var errb bytes.Buffer
	cmd := command(t, 0, "run", "../../scenarios/irrigation-valve.yaml")
	cmd.Stdout, cmd.Stderr = full, &errb
	if code := exitStatus(t, cmd.Run()); code != exitError || !strings.Contains(errb.String(), "standard output: write /dev/stdout: no space left on device") {
		t.Errorf("run > /dev/full: exit %d, stderr %q; want %d and the cause", code, errb.String(), exitError)
	}

	sweep := func(csv, js string) []string {
		return []string{"sweep", "../../scenarios/irrigation-valve.yaml", "--vary", "supply.voltage=22 V:26 V:3", "--csv", csv, "--json", js}
	}
	refCSV, refJSON := filepath.Join(d, "ref.csv"), filepath.Join(d, "ref.json")
	if code, stderr := runTimed(t, io.Discard, sweep(refCSV, refJSON)); code != exitOK {
		t.Fatalf("reference sweep: exit %d: %s", code, stderr)
	}
	r, w, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	r.Close() // the reader is gone before the first line
	csv, js := filepath.Join(d, "s.csv"), filepath.Join(d, "s.json")
	errb.Reset()
	cmd = command(t, 0, sweep(csv, js)...)
	cmd.Stdout, cmd.Stderr = w, &errb
	err = cmd.Run()
	w.Close()
	if code := exitStatus(t, err); code != exitOK || errb.Len() > 0 {
		t.Errorf("sweep into a closed pipe: exit %d (negative: killed by that signal), stderr %q; want %d, quiet", code, errb.String(), exitOK)
	}
	for _, f := range [][2]string{{csv, refCSV}, {js, refJSON}} {
		got, _ := os.ReadFile(f[0])
		want, _ := os.ReadFile(f[1])
		if len(want) == 0 || !bytes.Equal(got, want) {
			t.Errorf("%s after a closed pipe: %d bytes, want the %d of the reference", filepath.Base(f[0]), len(got), len(want))
		}
	}
}

// TestFullDisk writes every kind of output with the file size limited
// (RLIMIT_FSIZE: each write past the limit fails, as on a full disk): the
// command exits 1 naming the file and the cause, the old file is intact,
// no new or temporary file is left. Two outputs of one command are
// written together: when the larger one fails, the smaller one, which
// fitted, is not replaced either. (The fits fit one parameter: the
// outputs are the point, not the fit.)
func TestFullDisk(t *testing.T) {
	t.Parallel()
	const (
		valve = "../../scenarios/irrigation-valve.yaml"
		duty  = "../../scenarios/door-strike-duty.yaml"
		trace = "../../testdata/fit/irrigation-scope.csv"
		small = 256
	)
	vary := []string{"--vary", "supply.voltage=22 V:26 V:3"}
	cases := []struct {
		name  string
		limit int64
		args  []string // the output is $O (one of old.*, or a new name)
		out   string
	}{
		{"run CSV", small, []string{"run", valve, "--csv", "$O"}, "old.csv"},
		{"run JSON", small, []string{"run", valve, "--json", "$O"}, "old.json"},
		{"run PNG", small, []string{"run", valve, "--plot", "$O"}, "old.png"},
		{"run SVG", small, []string{"run", valve, "--plot", "$O"}, "new.svg"},
		{"report HTML", small, []string{"report", valve, "-o", "$O"}, "old.html"},
		{"fitted scenario", small, []string{"fit", valve, "--trace", trace, "--params", "resistance", "-o", "$O"}, "old.yaml"},
		{"fit CSV", small, []string{"fit", valve, "--trace", trace, "--params", "resistance", "--csv", "$O"}, "old.csv"},
		{"fit plot", small, []string{"fit", valve, "--trace", trace, "--params", "resistance", "--plot", "$O"}, "new.svg"},
		{"magnet curves", small, []string{"magnet", valve, "--curves", "$O"}, "old.csv"},
		{"magnet plot", small, []string{"magnet", valve, "--plot", "$O"}, "new.svg"},
		{"heat CSV", small, []string{"heat", duty, "--csv", "$O"}, "old.csv"},
		{"heat plot", small, []string{"heat", duty, "--plot", "$O"}, "old.png"},
		{"sweep CSV", small, append([]string{"sweep", valve, "--csv", "$O"}, vary...), "old.csv"},
		{"sweep JSON", small, append([]string{"sweep", valve, "--json", "$O"}, vary...), "old.json"},
		{"sweep plot", small, append([]string{"sweep", valve, "--plot", "$O"}, vary...), "new.svg"},
		{"clamps plot", small, []string{"clamps", valve, "--plot", "$O"}, "old.png"},
		// The sweep's CSV (about 0.5 kB, written first) fits in 1 kB, its
		// JSON (about 1.5 kB) does not; the run's JSON (about 5 kB) fits in
		// 8 kB, its CSV (about 15 kB) does not.
		{"sweep CSV and JSON together", 1 << 10, append([]string{"sweep", valve, "--csv", "$D/old.csv", "--json", "$O"}, vary...), "old.json"},
		{"run JSON and CSV together", 8 << 10, []string{"run", valve, "--json", "$D/old.json", "--csv", "$O"}, "old.csv"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			d := t.TempDir()
			for _, f := range []string{"old.csv", "old.json", "old.png", "old.html", "old.yaml"} {
				os.WriteFile(filepath.Join(d, f), []byte("old content\n"), 0o644)
			}
			before := snapshot(t, d)
			out := filepath.Join(d, c.out)
			args := make([]string, len(c.args))
			for k, a := range c.args {
				args[k] = strings.ReplaceAll(strings.ReplaceAll(a, "$O", out), "$D", d)
			}
			var errb bytes.Buffer
			cmd := command(t, c.limit, args...)
			cmd.Stdout, cmd.Stderr = io.Discard, &errb
			code := exitStatus(t, cmd.Run())
			if code != exitError || !strings.Contains(errb.String(), out) || !strings.Contains(errb.String(), "file too large") {
				t.Errorf("%v: exit %d, stderr %q; want %d naming %s and the cause", args, code, errb.String(), exitError, c.out)
			}
			if ch := changes(before, snapshot(t, d)); len(ch) > 0 {
				t.Errorf("files touched by a failed write: %v", ch)
			}
		})
	}
}

// TestResidualLabel: the energy residual is printed as a fraction of the
// largest energy that flowed, and says "of supply" only when that is the
// supply's: a 1 F bulk capacitor on the peak-and-hold demo gives 2.3 J
// from the supply and 2.6 J of coil loss (the capacitor's charge
// discharged), and the residual was labelled "of supply".
func TestResidualLabel(t *testing.T) {
	t.Parallel()
	src, err := os.ReadFile("../../scenarios/peak-hold-valve.yaml")
	if err != nil {
		t.Fatal(err)
	}
	const bulk = "  bulk capacitance: 470 uF\n"
	if !bytes.Contains(src, []byte(bulk)) {
		t.Fatal("the peak-and-hold demo's bulk capacitance changed; update the test")
	}
	path := filepath.Join(t.TempDir(), "big-bulk.yaml")
	if err := os.WriteFile(path, bytes.Replace(src, []byte(bulk), []byte("  bulk capacitance: 1 F\n"), 1), 0o644); err != nil {
		t.Fatal(err)
	}
	var out bytes.Buffer
	code, stderr := runTimed(t, &out, []string{"run", path})
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	text := out.String()
	if !strings.Contains(text, "of the largest flow") || strings.Contains(text, "of supply") {
		t.Errorf("the residual's label: want \"of the largest flow\", not \"of supply\":\n%s", text)
	}
}
