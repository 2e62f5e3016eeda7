package main

import (
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
)

// Shared results: a command line whose outputs several tests check runs
// once per test binary (the tests call run in process, so the first
// caller runs it and the others wait for its result).

// sharedDir holds the output files of shared command lines; TestMain
// makes it and removes it after the tests.
var sharedDir string

// cliResult is a command's exit status and what it printed.
type cliResult struct {
	code           int
	stdout, stderr string
}

// shared maps a command line to its *sharedRun.
var shared sync.Map

type sharedRun struct {
	once sync.Once
	res  cliResult
}

// runShared runs the command line once per test binary and returns its
// result. Only for command lines whose outputs are standard output or
// files in sharedDir (a test's own folder is gone when it ends).
func runShared(args ...string) cliResult {
	v, _ := shared.LoadOrStore(strings.Join(args, "\x00"), &sharedRun{})
	s := v.(*sharedRun)
	s.once.Do(func() {
		s.res.code, s.res.stdout, s.res.stderr = runCLI(args...)
	})
	return s.res
}

// demoRun is a demo scenario's "run" with every output (--json, --csv,
// and --plot as SVG) and its "report", each run once per test binary.
type demoRun struct {
	file, name                 string // the scenario file; its base name without .yaml
	run, report                cliResult
	json, csv, svg, reportHTML string // output files
}

// demoOutputs runs (once) the demo's run and report; a run that is
// neither ok nor failing a rating fails the test.
func demoOutputs(t *testing.T, file string) *demoRun {
	t.Helper()
	name := strings.TrimSuffix(filepath.Base(file), ".yaml")
	out := func(ext string) string { return filepath.Join(sharedDir, name+"."+ext) }
	d := &demoRun{file: file, name: name, json: out("json"), csv: out("csv"), svg: out("svg"), reportHTML: out("html")}
	d.run = runShared("run", file, "--json", d.json, "--csv", d.csv, "--plot", d.svg)
	d.report = runShared("report", file, "-o", d.reportHTML)
	if d.run.code != exitOK && d.run.code != exitFailing {
		t.Fatalf("run %s: exit %d: %s", file, d.run.code, d.run.stderr)
	}
	return d
}

// read returns the content of one of the demo's output files.
func (d *demoRun) read(t *testing.T, file string) []byte {
	t.Helper()
	b, err := os.ReadFile(file)
	if err != nil {
		t.Fatal(err)
	}
	return b
}
