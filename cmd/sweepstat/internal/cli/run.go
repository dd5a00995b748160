package cli

import (
	"context"
	"errors"
	"fmt"
	"path/filepath"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"github.com/sweepstat/sweepstat/batch"
)

// RunOptions are the inputs of `sweepstat run`.
type RunOptions struct {
	IO      *IOStreams
	Runner  RunFunc          // runs one study; batch.Run in the real program
	Now     func() time.Time // clock of the summaries and plain progress lines
	Version string
	Ctx     context.Context

	Args    []string // study files and folders; none means the embedded demo study
	Out     string   // parent output folder
	Force   bool     // replace existing output folders
	Workers int      // 0 means all cores
	Quiet   bool
}

// NewCmdRun builds `sweepstat run`. With a nil runF it runs [RunRun].
func NewCmdRun(f *Factory, runF func(*RunOptions) error) *cobra.Command {
	opts := &RunOptions{IO: f.IO}
	cmd := &cobra.Command{
		Use:   "run [STUDY.yaml | DIR]...",
		Short: "Run studies into an output folder",
		Long: `Run samples and solves every case of each study and writes its outputs into
OUT/<study name>/: cases.arrow, summary.arrow, tornado.arrow,
sensitivity.arrow, report.html and run.json.

With no argument it runs the embedded demo study. A folder stands for every
*.yaml and *.yml file directly in it, in sorted order. All studies are loaded
and checked first; if any has an error, nothing runs (exit 2). A study that
fails while running does not stop the others; the exit code is then 1.
An existing output folder is an error unless --force is given.

Progress goes to stderr: a bar on a terminal, a line every few seconds
otherwise, nothing with --quiet.`,
		Example: `  sweepstat run                                # the embedded demo study into out/
  sweepstat run study.yaml --out results       # into results/<study name>/
  sweepstat run studies/ --force --workers 8   # every study in a folder
  sweepstat run study.yaml --quiet 2>/dev/null # for scripts`,
		Args: cobra.ArbitraryArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			g := f.global()
			opts.Args = args
			opts.Workers = g.Workers
			opts.Quiet = g.Quiet
			opts.Runner = f.Run
			opts.Now = f.Now
			opts.Version = f.Version
			opts.Ctx = cmd.Context()
			if runF != nil {
				return runF(opts)
			}
			return RunRun(opts)
		},
	}
	cmd.Flags().StringVarP(&opts.Out, "out", "o", "out", "parent `DIR` of the study output folders")
	cmd.Flags().BoolVar(&opts.Force, "force", false, "replace existing output folders")
	return cmd
}

// RunRun loads every study of opts.Args, then runs each in turn with
// opts.Runner. It returns a *StudyErrors before running anything if a
// study is invalid, a *RunErrors if some studies failed (the others ran),
// and an error wrapping "interrupted" if opts.Ctx was cancelled.
func RunRun(opts *RunOptions) error {
	if opts.Workers < 0 {
		return badInput("--workers must be 0 (all cores) or more, not %d", opts.Workers)
	}
	if opts.Out == "" {
		return badInput("--out must name a folder")
	}
	if opts.Runner == nil {
		return errors.New("no study runner is configured")
	}
	ctx := opts.Ctx
	if ctx == nil {
		ctx = context.Background()
	}
	now := opts.Now
	if now == nil {
		now = time.Now
	}
	sts, err := loadStudies(opts.Args)
	if err != nil {
		return err
	}

	ios := opts.IO
	fails := &RunErrors{Failed: map[string]error{}, Total: len(sts)}
	done := 0
	for _, st := range sts {
		if ctx.Err() != nil {
			return fmt.Errorf("%w: %s was not started", errInterrupted, st.Name)
		}
		dir := filepath.Join(opts.Out, st.Name)
		start := now()
		info, err := opts.Runner(ctx, st, batch.Options{
			Out:      opts.Out,
			Workers:  opts.Workers,
			Force:    opts.Force,
			Progress: NewProgress(ios, opts.Quiet, now),
			Version:  opts.Version,
			Now:      now,
		})
		secs := now().Sub(start).Seconds()
		if ctx.Err() != nil && (err != nil || info == nil) {
			return fmt.Errorf("%w: %s is not finished", errInterrupted, st.Name)
		}
		if err != nil {
			fmt.Fprintf(ios.ErrOut, "sweepstat: %s: %v\n", st.Name, err)
			fails.Failed[st.Name] = err
			fails.Order = append(fails.Order, st.Name)
			continue
		}
		if info == nil {
			info = &batch.Info{Study: st.Name}
		}
		done++
		if !opts.Quiet {
			fmt.Fprintf(ios.ErrOut, "%s: %d cases, %d rejected, %.1f s, %s\n",
				st.Name, info.Cases, info.Rejected, secs, dir)
		}
		printRunSummary(opts, st.Name, dir, info)
	}
	if done > 0 {
		fmt.Fprintf(ios.Out, "\nCaution: %s\n", batch.Caution)
	}
	if len(fails.Order) > 0 {
		return fails
	}
	return nil
}

// printRunSummary writes what a finished study left, for people, to stdout.
func printRunSummary(opts *RunOptions, name, dir string, info *batch.Info) {
	w := opts.IO.Out
	fmt.Fprintf(w, "%s: outputs in %s\n", name, dir)
	if len(info.Files) > 0 {
		fmt.Fprintf(w, "  files:      %s\n", strings.Join(info.Files, ", "))
	}
	fmt.Fprintf(w, "  cases:      %d (%d rejected)\n", info.Cases, info.Rejected)
	if info.CasesPerSec > 0 {
		fmt.Fprintf(w, "  throughput: %.0f cases/s\n", info.CasesPerSec)
	}
}
