package cli

import (
	"context"
	"fmt"

	"github.com/spf13/cobra"
)

// DirCmdOptions are the inputs of `sweepstat merge` and `sweepstat
// report`.
type DirCmdOptions struct {
	IO      *IOStreams
	Ctx     context.Context
	Name    string  // "merge" or "report"
	Func    DirFunc // nil: the command is not available yet
	Dir     string
	Workers int
	Quiet   bool
	Version string
}

// NewCmdMerge builds `sweepstat merge`, which calls f.Merge. With a nil
// runF it runs [DirRun].
func NewCmdMerge(f *Factory, runF func(*DirCmdOptions) error) *cobra.Command {
	return newDirCmd(f, runF, "merge", func() DirFunc { return f.Merge }, &cobra.Command{
		Use:   "merge DIR",
		Short: "Combine shard outputs and write the summaries",
		Long: `Merge combines the shard outputs found under DIR (the --out folder the shards
wrote into, every study in it) into the outputs a single run would have
written, and writes the summaries.`,
		Example: `  sweepstat merge out`,
	})
}

// NewCmdReport builds `sweepstat report`, which calls f.Report. With a nil
// runF it runs [DirRun].
func NewCmdReport(f *Factory, runF func(*DirCmdOptions) error) *cobra.Command {
	return newDirCmd(f, runF, "report", func() DirFunc { return f.Report }, &cobra.Command{
		Use:   "report DIR",
		Short: "Write the HTML report of finished study outputs",
		Long: `Report reads the outputs of every study under DIR and writes each study's
report.html again from them.`,
		Example: `  sweepstat report out`,
	})
}

func newDirCmd(f *Factory, runF func(*DirCmdOptions) error, name string, fn func() DirFunc, cmd *cobra.Command) *cobra.Command {
	opts := &DirCmdOptions{IO: f.IO, Name: name}
	cmd.Args = usageArgs(cobra.ExactArgs(1))
	cmd.RunE = func(cmd *cobra.Command, args []string) error {
		g := f.global()
		opts.Ctx = cmd.Context()
		opts.Func = fn()
		opts.Dir = args[0]
		opts.Workers = g.Workers
		opts.Quiet = g.Quiet
		opts.Version = f.Version
		if runF != nil {
			return runF(opts)
		}
		return DirRun(opts)
	}
	return cmd
}

// DirRun calls opts.Func on opts.Dir, or fails with "not available yet"
// when there is none.
func DirRun(opts *DirCmdOptions) error {
	if opts.Func == nil {
		return fmt.Errorf("%s is not available yet in this version", opts.Name)
	}
	if opts.Workers < 0 {
		return badInput("--workers must be 0 (all cores) or more, not %d", opts.Workers)
	}
	ctx := opts.Ctx
	if ctx == nil {
		ctx = context.Background()
	}
	err := opts.Func(ctx, opts.Dir, DirOptions{
		Workers:  opts.Workers,
		Progress: NewProgress(opts.IO, opts.Quiet, nil),
		Version:  opts.Version,
	})
	if err != nil && ctx.Err() != nil {
		return fmt.Errorf("%w: %s of %s is not finished", errInterrupted, opts.Name, opts.Dir)
	}
	return err
}
