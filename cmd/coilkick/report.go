package main

import (
	"errors"
	"io"

	"github.com/urfave/cli/v2"

	"coilkick"
)

// reportCommands are the plotting and report commands.
func reportCommands(stdout io.Writer) []*cli.Command {
	return nil
}

// plotRun writes the waveform plot of a run to file (.png or .svg).
func plotRun(file, path string, md *coilkick.Model, res *coilkick.Result) error {
	return errors.New("plots are not implemented yet")
}
