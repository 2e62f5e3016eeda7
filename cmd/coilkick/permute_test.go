package main

import (
	"io"
	"slices"
	"testing"

	"github.com/urfave/cli/v2"
)

// Every flag that takes a value, of every command, keeps its value when
// written after the scenario file, and a flag that takes none does not
// swallow the file: the reordering comes from the flags' own definitions,
// so a new command's flags need nothing more.
func TestPermuteEveryCommandsFlags(t *testing.T) {
	t.Parallel()
	app := newApp(io.Discard, io.Discard)
	seen := 0
	for _, cmd := range app.Commands {
		vf := valueFlags(cmd)
		for _, f := range cmd.Flags {
			name := f.Names()[0]
			flag := "--" + name
			if len(name) == 1 {
				flag = "-" + name
			}
			takes := false
			if tv, ok := f.(interface{ TakesValue() bool }); ok {
				takes = tv.TakesValue()
			}
			if _, isBool := f.(*cli.BoolFlag); isBool == takes {
				t.Errorf("%s %s: takes a value %v, is a bool flag %v", cmd.Name, flag, takes, isBool)
			}
			want := []string{flag, "S.yaml"}
			args := []string{"S.yaml", flag}
			if takes {
				want = []string{flag, "V", "S.yaml"}
				args = []string{"S.yaml", flag, "V"}
				seen++
			}
			if got := permute(args, vf); !slices.Equal(got, want) {
				t.Errorf("%s %v: reordered to %v, want %v", cmd.Name, args, got, want)
			}
		}
	}
	if seen < 30 {
		t.Errorf("only %d value flags seen", seen)
	}
	if len(valueFlags(nil)) != 0 {
		t.Error("an unknown command has value flags")
	}
}
