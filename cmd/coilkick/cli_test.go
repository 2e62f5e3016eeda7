package main

import (
	"bytes"
	"os"
	"strings"
	"testing"
)

// TestCommandLineConventions: each way of calling the program wrong is
// exit 1 with a one-line reason on standard error (and the usage where a
// command is known), nothing on standard output; --version is exit 0.
// The conventions are the project's own (README, "Command line").
func TestCommandLineConventions(t *testing.T) {
	t.Parallel()
	const scen = "../../scenarios/irrigation-valve.yaml"
	cases := []struct {
		name   string
		args   []string
		code   int
		first  string // the first line of stderr (or stdout for exit 0), a substring
		usage  string // a later line of stderr, a substring ("" for none)
		stdout string // exit 0 only
	}{
		{"no command", nil, exitError, "coilkick: no command given", "usage: coilkick COMMAND", ""},
		{"unknown command", []string{"frob", scen}, exitError, `coilkick: unknown command "frob"; the commands are: run, magnet`, "", ""},
		{"flag before the command", []string{"--json", "-", "run", scen}, exitError, "coilkick: --json: flag before the command", "usage: coilkick COMMAND", ""},
		{"unknown flag", []string{"run", scen, "--bogus"}, exitError, "coilkick: --bogus: no such option", "usage: coilkick run [options] SCENARIO.yaml", ""},
		{"unknown short flag", []string{"run", "-q", scen}, exitError, "coilkick: -q: no such option", "(coilkick help run lists the options)", ""},
		{"not a number", []string{"run", scen, "--tolerance", "abc"}, exitError, `coilkick: --tolerance "abc": not a number`, "usage: coilkick run", ""},
		{"not a whole number", []string{"sweep", scen, "--vary", "supply.voltage=22 V:26 V:3", "--workers", "1.5"}, exitError, `coilkick: --workers "1.5": not a whole number`, "usage: coilkick sweep", ""},
		{"bad unit in a flag", []string{"run", scen, "--plot", "/nonexistent-dir/w.png", "--plot-window", "0 ms:3 parsecs"}, exitError, "--plot-window", "", ""},
		{"no file", []string{"magnet"}, exitError, "coilkick: magnet needs exactly one scenario file, got 0 arguments", "usage: coilkick magnet", ""},
		{"two files", []string{"check", scen, scen}, exitError, "coilkick: check needs exactly one scenario file, got 2 arguments", "usage: coilkick check", ""},
		{"version flag", []string{"--version"}, exitOK, "", "", "coilkick "},
		{"version command", []string{"version"}, exitOK, "", "", "coilkick "},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var stdout, stderr bytes.Buffer
			code := runApp(&stdout, &stderr, append([]string{"coilkick"}, tc.args...))
			if code != tc.code {
				t.Fatalf("exit %d, want %d\nstdout: %s\nstderr: %s", code, tc.code, stdout.String(), stderr.String())
			}
			if tc.code == exitOK {
				out := stdout.String()
				if !strings.HasPrefix(out, tc.stdout) || strings.Count(out, "\n") != 1 || stderr.Len() != 0 {
					t.Errorf("stdout %q, stderr %q: want one line starting %q", out, stderr.String(), tc.stdout)
				}
				return
			}
			if stdout.Len() != 0 {
				t.Errorf("an error wrote to stdout: %q", stdout.String())
			}
			lines := strings.Split(strings.TrimRight(stderr.String(), "\n"), "\n")
			if !strings.Contains(lines[0], tc.first) {
				t.Errorf("first line %q, want it to contain %q", lines[0], tc.first)
			}
			if tc.usage == "" {
				if len(lines) != 1 {
					t.Errorf("stderr has %d lines, want one:\n%s", len(lines), stderr.String())
				}
				return
			}
			found := false
			for _, l := range lines[1:] {
				found = found || strings.Contains(l, tc.usage)
			}
			if !found {
				t.Errorf("stderr lacks %q:\n%s", tc.usage, stderr.String())
			}
		})
	}
}

// TestHelpDefaults: each option's help states its default once (a usage
// text that says "default" and the flag package's own "(default: 0)" gave
// two, the second wrong).
func TestHelpDefaults(t *testing.T) {
	t.Parallel()
	var list bytes.Buffer
	app := newApp(&list, &list)
	for _, name := range commandNames(app) {
		var stdout, stderr bytes.Buffer
		if code := runApp(&stdout, &stderr, []string{"coilkick", "help", name}); code != exitOK {
			t.Fatalf("help %s: exit %d: %s", name, code, stderr.String())
		}
		for _, line := range strings.Split(stdout.String(), "\n") {
			if n := strings.Count(strings.ToLower(line), "default"); n > 1 {
				t.Errorf("help %s: %d defaults on one line: %s", name, n, strings.TrimSpace(line))
			}
		}
	}
}

// TestFlagsInReadme: every option of every command is named in the
// README (as `--name` or `-o`), so the two cannot drift apart silently.
func TestFlagsInReadme(t *testing.T) {
	t.Parallel()
	readme, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	var sink bytes.Buffer
	app := newApp(&sink, &sink)
	for _, cmd := range app.Commands {
		for _, f := range cmd.Flags {
			for _, name := range f.Names() {
				if name == "help" || name == "h" {
					continue
				}
				form := "--" + name
				if len(name) == 1 {
					form = "-" + name
				}
				if !bytes.Contains(readme, []byte(form)) {
					t.Errorf("%s %s is not in the README", cmd.Name, form)
				}
			}
		}
	}
}
