package cli

import (
	"errors"
	"fmt"
	"io/fs"

	"github.com/spf13/cobra"

	"github.com/sweepstat/sweepstat/batch"
)

// ExportOptions are the inputs of `sweepstat export`.
type ExportOptions struct {
	IO     *IOStreams
	Export ExportFunc
	File   string
	CSV    bool
}

// NewCmdExport builds `sweepstat export`. With a nil runF it runs
// [ExportRun].
func NewCmdExport(f *Factory, runF func(*ExportOptions) error) *cobra.Command {
	opts := &ExportOptions{IO: f.IO}
	cmd := &cobra.Command{
		Use:   "export FILE.arrow --csv",
		Short: "Write an output table as CSV to stdout",
		Long: `Export reads one of the Arrow IPC files a run writes (cases.arrow,
summary.arrow, tornado.arrow, sensitivity.arrow) and writes it to stdout in
the format chosen: a header row of column names, then one row per record.

A file that does not exist or is not a complete Arrow IPC file (empty, cut
short, damaged) is bad input: the error names it and the exit code is 2.`,
		Example: `  sweepstat export out/demo-updip-waterflood/summary.arrow --csv
  sweepstat export out/demo-updip-waterflood/cases.arrow --csv > cases.csv`,
		Args: usageArgs(cobra.ExactArgs(1)),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.File = args[0]
			opts.Export = f.Export
			if runF != nil {
				return runF(opts)
			}
			return ExportRun(opts)
		},
	}
	cmd.Flags().BoolVar(&opts.CSV, "csv", false, "write CSV")
	return cmd
}

// ExportRun writes opts.File to stdout in the chosen format. No format
// flag is bad input; so is a file that does not exist and one that is not
// a complete Arrow IPC file ([batch.ErrCorrupt]: empty, truncated, damaged,
// a folder), whose error names it. Rows written before damage is found
// stay on stdout.
func ExportRun(opts *ExportOptions) error {
	if !opts.CSV {
		return badInput("choose a format: --csv")
	}
	if opts.Export == nil {
		return errors.New("export is not available")
	}
	if err := opts.Export(opts.IO.Out, opts.File); err != nil {
		if errors.Is(err, fs.ErrNotExist) || errors.Is(err, batch.ErrCorrupt) {
			return &InputError{Err: err}
		}
		return fmt.Errorf("exporting %s: %w", opts.File, err)
	}
	return nil
}
