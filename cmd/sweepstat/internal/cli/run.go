package cli

import (
	"context"
	"errors"
	"fmt"
	"os"
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

	Shard      string              // --shard: "K/N", "auto" or "" for whole studies
	ShardCount int                 // --shard-count: N for --shard auto when the scheduler does not give it
	Resume     bool                // --resume: keep complete outputs, redo the others
	Getenv     func(string) string // environment of --shard auto; nil means os.Getenv
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
An existing output folder is an error unless --force is given. An --out that
is a file, or a folder that cannot be created or written, is bad input (exit
2), found before anything runs.

--resume keeps a study whose outputs are complete and match (same study
file, seed and version; every file there with the SHA-256 run.json gives)
and redoes any other.

--shard K/N solves only shard K of N of each study: a contiguous range of
cases, aligned to the record batches of cases.arrow, written with a
manifest into OUT/<study name>/shards/. Shards of one study share its
folder; running a shard whose files exist needs --force or --resume.
'sweepstat merge OUT' then writes the outputs one run would have written.
--shard auto takes K and N from a Slurm job array (SLURM_ARRAY_TASK_ID with
SLURM_ARRAY_TASK_COUNT, or _MIN and _MAX) or a Kubernetes Indexed Job
(JOB_COMPLETION_INDEX, with N from --shard-count or SWEEPSTAT_SHARD_COUNT).

Progress goes to stderr: a bar on a terminal, a line every few seconds
otherwise, nothing with --quiet.`,
		Example: `  sweepstat run                                # the embedded demo study into out/
  sweepstat run study.yaml --out results       # into results/<study name>/
  sweepstat run studies/ --force --workers 8   # every study in a folder
  sweepstat run study.yaml --quiet 2>/dev/null # for scripts
  sweepstat run study.yaml --shard 2/8         # shard 2 of 8, then: sweepstat merge out
  sweepstat run study.yaml --shard auto --resume  # in a Slurm array task`,
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
			opts.Getenv = f.Getenv
			if runF != nil {
				return runF(opts)
			}
			return RunRun(opts)
		},
	}
	cmd.Flags().StringVarP(&opts.Out, "out", "o", "out", "parent `DIR` of the study output folders")
	cmd.Flags().BoolVar(&opts.Force, "force", false, "replace existing output folders")
	cmd.Flags().StringVar(&opts.Shard, "shard", "", "solve only shard `K/N` of each study's cases into OUT/<study>/shards/ (auto: from the cluster array task)")
	cmd.Flags().IntVar(&opts.ShardCount, "shard-count", 0, "number of shards for --shard auto when the scheduler does not give it (Kubernetes Indexed Jobs)")
	cmd.Flags().BoolVar(&opts.Resume, "resume", false, "keep outputs (or shards) that are complete and match; redo the others")
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
	shard, err := runShard(opts)
	if err != nil {
		return err
	}
	sts, err := loadStudies(opts.Args)
	if err != nil {
		return err
	}
	if err := checkOutDir(opts.Out); err != nil {
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
			Shard:    shard,
			Resume:   opts.Resume,
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
			what := ""
			if info.Shard != "" {
				what, dir = "shard "+info.Shard+", ", filepath.Join(dir, batch.ShardsDir)
			}
			if info.Skipped {
				fmt.Fprintf(ios.ErrOut, "%s: %scomplete, kept (--resume), %s\n", st.Name, what, dir)
			} else {
				fmt.Fprintf(ios.ErrOut, "%s: %s%d cases, %d rejected, %.1f s, %s\n",
					st.Name, what, info.Cases, info.Rejected, secs, dir)
			}
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
		fmt.Fprintf(w, "  files:      %s\n", strings.Join(fileList(info.Files), ", "))
	}
	fmt.Fprintf(w, "  cases:      %d (%d rejected)\n", info.Cases, info.Rejected)
	if info.CasesPerSec > 0 {
		fmt.Fprintf(w, "  throughput: %.0f cases/s\n", info.CasesPerSec)
	}
}

// runShard checks the --shard, --shard-count and --resume flags and
// returns the shard to run (zero for whole studies). Every problem is bad
// input.
func runShard(opts *RunOptions) (batch.Shard, error) {
	if opts.Force && opts.Resume {
		return batch.Shard{}, badInput("--force and --resume exclude each other: --force redoes every output, --resume keeps the complete ones")
	}
	if opts.ShardCount < 0 {
		return batch.Shard{}, badInput("--shard-count must be 1 or more, not %d", opts.ShardCount)
	}
	switch opts.Shard {
	case "":
		if opts.ShardCount != 0 {
			return batch.Shard{}, badInput("--shard-count goes with --shard auto")
		}
		return batch.Shard{}, nil
	case "auto":
		getenv := opts.Getenv
		if getenv == nil {
			getenv = os.Getenv
		}
		s, err := batch.ShardFromEnv(getenv, opts.ShardCount)
		if err != nil {
			return batch.Shard{}, badInput("--shard: %w", err)
		}
		return s, nil
	}
	if opts.ShardCount != 0 {
		return batch.Shard{}, badInput("--shard-count goes with --shard auto, not --shard %s", opts.Shard)
	}
	s, err := batch.ParseShard(opts.Shard)
	if err != nil {
		return batch.Shard{}, badInput("--shard: %w", err)
	}
	return s, nil
}

// fileList shortens a run's file list for the summary line: the files in
// a folder (the charts) are counted, not listed.
func fileList(files []string) []string {
	var out []string
	folders := map[string]int{}
	var order []string
	for _, f := range files {
		dir, _, ok := strings.Cut(f, "/")
		if !ok {
			out = append(out, f)
			continue
		}
		if folders[dir] == 0 {
			order = append(order, dir)
		}
		folders[dir]++
	}
	for _, d := range order {
		out = append(out, fmt.Sprintf("%s/ (%d files)", d, folders[d]))
	}
	return out
}
