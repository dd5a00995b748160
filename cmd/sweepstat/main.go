// Command sweepstat runs batch uncertainty and sensitivity studies of
// one-dimensional immiscible displacement. See `sweepstat --help`.
package main

import (
	"os"

	"github.com/sweepstat/sweepstat/cmd/sweepstat/internal/cli"
)

func main() {
	os.Exit(cli.Main())
}
