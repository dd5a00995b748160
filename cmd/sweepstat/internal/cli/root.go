package cli

import (
	"context"
	"fmt"
	"os"
	"os/signal"
	"runtime/debug"
	"syscall"
	"time"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"github.com/sweepstat/sweepstat/batch"
)

// Main runs the command line with the process's arguments and streams and
// returns the exit code. SIGINT and SIGTERM cancel the commands' context;
// a second signal ends the process at once.
func Main() int {
	if os.Getenv("GOMEMLIMIT") == "" {
		// Runs stream their cases and summarise one group of columns at a
		// time; a soft limit makes the collector keep the heap near what is
		// live instead of letting it grow to twice that (10 million cases
		// then stay within 512 MiB). GOMEMLIMIT overrides it.
		debug.SetMemoryLimit(DefaultMemoryLimit)
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	go func() {
		<-ctx.Done()
		stop() // restore default handling: a second signal kills
	}()
	ios := System()
	f := &Factory{
		IO:      ios,
		Version: BuildVersion(),
		Now:     time.Now,
		Run:     batch.Run,
		Export:  batch.ExportCSV,
		Merge:   MergeStudies(ios, time.Now),
		Report: func(ctx context.Context, dir string, o DirOptions) error {
			return batch.Report(ctx, dir, batch.ReportOptions{Workers: o.Workers, Progress: o.Progress, Version: o.Version})
		},
	}
	return Execute(ctx, f, os.Args[1:])
}

// DefaultMemoryLimit is the soft memory limit of the sweepstat process
// when GOMEMLIMIT is not set.
const DefaultMemoryLimit = 400 << 20

// Execute runs the command tree built from f with args, prints any error
// once to f.IO.ErrOut and returns the exit code ([ExitCode]).
func Execute(ctx context.Context, f *Factory, args []string) int {
	root := NewCmdRoot(f)
	root.SetArgs(args)
	_, err := root.ExecuteContextC(ctx)
	if err != nil {
		PrintError(f.IO.ErrOut, err)
		return ExitCode(err)
	}
	return 0
}

// BuildVersion returns the main module's version from the build
// information, "devel" (with the VCS revision when recorded) for a build
// from a source tree.
func BuildVersion() string {
	info, ok := debug.ReadBuildInfo()
	if !ok {
		return "devel"
	}
	if v := info.Main.Version; v != "" && v != "(devel)" {
		return v
	}
	for _, s := range info.Settings {
		if s.Key == "vcs.revision" && len(s.Value) >= 12 {
			return "devel+" + s.Value[:12]
		}
	}
	return "devel"
}

// NewCmdRoot builds the whole command tree on f.
func NewCmdRoot(f *Factory) *cobra.Command {
	root := &cobra.Command{
		Use:   "sweepstat",
		Short: "Uncertainty and sensitivity of 1-D immiscible displacement",
		Long: `sweepstat samples uncertain relative-permeability end points and exponents,
viscosities and dip, solves one-dimensional immiscible displacement
(Buckley–Leverett with the Welge construction, gravity, no capillary pressure)
for every sample, and reports P90/P50/P10 breakthrough and recovery, tornado
and variance-based rankings, as Arrow IPC files and an HTML report.

Exit codes: 0 success, 1 run failure, 2 bad input or usage.`,
		Example: `  sweepstat init                     # write a commented study.yaml
  sweepstat check study.yaml         # validate it
  sweepstat run study.yaml           # run it into out/<study name>/
  sweepstat run                      # run the embedded demo study
  sweepstat solve --set mu2_cp=5     # one deterministic case`,
		Version:       f.Version,
		SilenceUsage:  true,
		SilenceErrors: true,
		Args:          cobra.ArbitraryArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if len(args) > 0 {
				return unknownCommand(cmd, args[0])
			}
			return cmd.Help()
		},
	}
	root.SuggestionsMinimumDistance = 2
	root.SetVersionTemplate("sweepstat {{.Version}}\n")
	root.SetIn(f.IO.In)
	root.SetOut(f.IO.Out)
	root.SetErr(f.IO.ErrOut)
	root.SetFlagErrorFunc(func(cmd *cobra.Command, err error) error {
		return &UsageError{Cmd: cmd.CommandPath(), Err: err}
	})
	AddGlobalFlags(root.PersistentFlags(), f.global())

	root.AddCommand(
		NewCmdRun(f, nil),
		NewCmdCheck(f, nil),
		NewCmdSolve(f, nil),
		NewCmdExport(f, nil),
		NewCmdInit(f, nil),
		NewCmdMerge(f, nil),
		NewCmdReport(f, nil),
	)
	return root
}

// AddGlobalFlags binds --quiet and --workers to g.
func AddGlobalFlags(fs *pflag.FlagSet, g *GlobalOptions) {
	fs.BoolVarP(&g.Quiet, "quiet", "q", false, "print no progress and no informational lines on stderr")
	fs.IntVar(&g.Workers, "workers", 0, "goroutines solving cases (0 = all cores)")
}

func unknownCommand(cmd *cobra.Command, name string) error {
	msg := fmt.Sprintf("unknown command %q for %q", name, cmd.CommandPath())
	if s := cmd.SuggestionsFor(name); len(s) > 0 {
		msg += fmt.Sprintf(" (did you mean %q?)", s[0])
	}
	return &UsageError{Cmd: cmd.CommandPath(), Err: fmt.Errorf("%s", msg)}
}

// usageArgs makes an argument validator's error a *UsageError.
func usageArgs(v cobra.PositionalArgs) cobra.PositionalArgs {
	return func(cmd *cobra.Command, args []string) error {
		if err := v(cmd, args); err != nil {
			return &UsageError{Cmd: cmd.CommandPath(), Err: err}
		}
		return nil
	}
}
