package main

import (
	"io"

	"github.com/urfave/cli/v2"
)

// studyCommands are the design-study commands (sweep, corners, clamps, solve).
func studyCommands(stdout io.Writer) []*cli.Command {
	return nil
}
