package cli

import (
	"errors"
	"fmt"
	"io/fs"
	"os"

	"github.com/spf13/cobra"

	"github.com/sweepstat/sweepstat/studies"
)

// InitOptions are the inputs of `sweepstat init`.
type InitOptions struct {
	IO    *IOStreams
	File  string // "-" means stdout
	Force bool
	Quiet bool
}

// NewCmdInit builds `sweepstat init`. With a nil runF it runs [InitRun].
func NewCmdInit(f *Factory, runF func(*InitOptions) error) *cobra.Command {
	opts := &InitOptions{IO: f.IO}
	cmd := &cobra.Command{
		Use:   "init [FILE]",
		Short: "Write a commented example study",
		Long: `Init writes a commented example study file: every key with its meaning and
default, and every form a parameter's value can take. FILE defaults to
study.yaml; "-" writes to stdout. An existing file is kept unless --force is
given.`,
		Example: `  sweepstat init                   # study.yaml
  sweepstat init tilted-block.yaml
  sweepstat init - | less`,
		Args: usageArgs(cobra.MaximumNArgs(1)),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.File = "study.yaml"
			if len(args) == 1 {
				opts.File = args[0]
			}
			opts.Quiet = f.global().Quiet
			if runF != nil {
				return runF(opts)
			}
			return InitRun(opts)
		},
	}
	cmd.Flags().BoolVar(&opts.Force, "force", false, "replace an existing file")
	return cmd
}

// InitRun writes studies.InitTemplate to opts.File, or to stdout for "-".
// An existing file without opts.Force is bad input.
func InitRun(opts *InitOptions) error {
	data := studies.InitTemplate()
	if opts.File == "-" {
		_, err := opts.IO.Out.Write(data)
		return err
	}
	flag := os.O_WRONLY | os.O_CREATE | os.O_EXCL
	if opts.Force {
		flag = os.O_WRONLY | os.O_CREATE | os.O_TRUNC
	}
	fh, err := os.OpenFile(opts.File, flag, 0o644)
	if errors.Is(err, fs.ErrExist) {
		return badInput("%s exists (use --force to replace it)", opts.File)
	}
	if err != nil {
		return fmt.Errorf("writing %s: %w", opts.File, err)
	}
	_, err = fh.Write(data)
	if cerr := fh.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return fmt.Errorf("writing %s: %w", opts.File, err)
	}
	if !opts.Quiet {
		fmt.Fprintf(opts.IO.ErrOut, "wrote %s; next: sweepstat check %s && sweepstat run %s\n", opts.File, opts.File, opts.File)
	}
	return nil
}
