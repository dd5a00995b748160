package cli

import (
	"context"
	"io"
	"time"

	"github.com/sweepstat/sweepstat/batch"
	"github.com/sweepstat/sweepstat/studies"
)

// RunFunc runs one study; [batch.Run] is the real one.
type RunFunc func(ctx context.Context, st *studies.Study, opt batch.Options) (*batch.Info, error)

// ExportFunc writes the Arrow IPC file at path to w as CSV; [batch.ExportCSV]
// is the real one.
type ExportFunc func(w io.Writer, path string) error

// DirFunc works on an output folder, as `merge DIR` and `report DIR` do.
type DirFunc func(ctx context.Context, dir string, opt DirOptions) error

// DirOptions are what `merge` and `report` pass to their [DirFunc].
type DirOptions struct {
	Workers  int            // 0 means all cores
	Progress batch.Progress // nil for none
	Version  string
}

// GlobalOptions hold the flags every command accepts. The root command
// binds them as persistent flags; commands read them when they run.
type GlobalOptions struct {
	Quiet   bool // no progress and no informational lines on stderr
	Workers int  // goroutines solving cases; 0 means all cores
}

// Factory carries what the commands depend on. [Main] fills it with the
// real streams and batch functions; tests fill it with [Test] streams and
// fakes. A nil Merge or Report makes that command fail with "not available
// yet" (exit 1); a nil Now means time.Now.
type Factory struct {
	IO      *IOStreams
	Version string           // printed by --version and written to run.json
	Now     func() time.Time // clock for summaries and plain progress lines
	Run     RunFunc
	Export  ExportFunc
	Merge   DirFunc
	Report  DirFunc
	Getenv  func(string) string // environment of `run --shard auto`; nil means os.Getenv
	Global  *GlobalOptions      // set by NewCmdRoot when nil
}

func (f *Factory) global() *GlobalOptions {
	if f.Global == nil {
		f.Global = new(GlobalOptions)
	}
	return f.Global
}
