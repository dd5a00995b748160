package cli

import (
	"fmt"

	"github.com/spf13/cobra"
)

// CheckOptions are the inputs of `sweepstat check`.
type CheckOptions struct {
	IO   *IOStreams
	Args []string // study files and folders
}

// NewCmdCheck builds `sweepstat check`. With a nil runF it runs
// [CheckRun].
func NewCmdCheck(f *Factory, runF func(*CheckOptions) error) *cobra.Command {
	opts := &CheckOptions{IO: f.IO}
	cmd := &cobra.Command{
		Use:   "check STUDY.yaml|DIR...",
		Short: "Validate study files without running them",
		Long: `Check reads and validates study files as run would, builds each one's
sampling design (which finds correlation matrices that are not positive
definite), and runs nothing.

For each good file it prints one line on stdout:

  ok: FILE (NAME, CASES cases, K uncertain parameters)

Errors print as FILE:LINE:COLUMN: KEY.PATH: MESSAGE, every one found, and
the exit code is 2. A folder stands for every *.yaml and *.yml file in it.`,
		Example: `  sweepstat check study.yaml
  sweepstat check studies/          # every study file in a folder`,
		Args: usageArgs(cobra.MinimumNArgs(1)),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Args = args
			if runF != nil {
				return runF(opts)
			}
			return CheckRun(opts)
		},
	}
	return cmd
}

// CheckRun validates every study of opts.Args and prints a line for each
// good one, or returns a *StudyErrors with every error of the bad ones.
// Good files are listed even when others are bad.
func CheckRun(opts *CheckOptions) error {
	files, err := studyFiles(opts.Args)
	if err != nil {
		return err
	}
	var bad []error
	for _, file := range files {
		st, err := loadStudy(file)
		if err != nil {
			bad = append(bad, err)
			continue
		}
		fmt.Fprintf(opts.IO.Out, "ok: %s (%s, %d cases, %d uncertain parameters)\n",
			file, st.Name, st.Cases, len(st.Uncertain()))
	}
	if len(bad) > 0 {
		return &StudyErrors{Lists: bad, Files: len(files), Checked: true}
	}
	return nil
}
