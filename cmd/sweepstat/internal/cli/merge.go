package cli

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"github.com/sweepstat/sweepstat/batch"
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
written, and writes the summaries.

Every study folder with a shards/ folder is checked first: each shard 1 … N
present once, its manifest complete, all from the same study file, seed and
version, each cases file with its manifest's size and SHA-256. If anything
is missing or does not match, merge names it and writes nothing (exit 2).
Then each study's cases.arrow is laid together from the shards' record
batches, identical byte for byte to one run's, and the summaries, report
and run.json are written beside the kept shards/ folder.`,
		Example: `  sweepstat merge out
  sbatch --dependency=afterok:$ARRAY --kill-on-invalid-dep=yes --wrap 'sweepstat merge out'`,
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

// MergeStudies returns the [DirFunc] of `sweepstat merge`: it checks the
// shards of every study under the folder ([batch.CheckShards]; problems
// are bad input and nothing is written), then merges each study
// ([batch.MergeStudy]) with a line per study on ios.ErrOut (unless quiet:
// opt.Progress nil)
// and a summary on ios.Out. A study that fails to merge does not stop the
// others; the error is then a *RunErrors.
func MergeStudies(ios *IOStreams, now func() time.Time) DirFunc {
	if now == nil {
		now = time.Now
	}
	return func(ctx context.Context, dir string, opt DirOptions) error {
		plans, err := batch.CheckShards(dir, opt.Workers)
		if errors.Is(err, batch.ErrShards) {
			return &InputError{Err: err}
		}
		if err != nil {
			return err
		}
		fails := &RunErrors{Failed: map[string]error{}, Total: len(plans)}
		done := 0
		for _, p := range plans {
			name := p.Study.Name
			if ctx.Err() != nil {
				return fmt.Errorf("%w: %s was not merged", errInterrupted, name)
			}
			start := now()
			info, err := batch.MergeStudy(ctx, p, batch.Options{Workers: opt.Workers, Progress: opt.Progress, Now: now})
			if err != nil {
				if ctx.Err() != nil {
					return fmt.Errorf("%w: %s is not merged", errInterrupted, name)
				}
				fmt.Fprintf(ios.ErrOut, "sweepstat: %s: %v\n", name, err)
				fails.Failed[name] = err
				fails.Order = append(fails.Order, name)
				continue
			}
			done++
			if opt.Progress != nil { // nil with --quiet
				fmt.Fprintf(ios.ErrOut, "%s: merged %d shards, %d cases, %d rejected, %.1f s, %s\n",
					name, info.Shards, info.Cases, info.Rejected, now().Sub(start).Seconds(), p.Dir)
			}
			w := ios.Out
			fmt.Fprintf(w, "%s: outputs in %s (merged from %d shards)\n", name, p.Dir, info.Shards)
			fmt.Fprintf(w, "  files:      %s\n", strings.Join(fileList(info.Files), ", "))
			fmt.Fprintf(w, "  cases:      %d (%d rejected)\n", info.Cases, info.Rejected)
		}
		if done > 0 {
			fmt.Fprintf(ios.Out, "\nCaution: %s\n", batch.Caution)
		}
		if len(fails.Order) > 0 {
			return fails
		}
		return nil
	}
}
