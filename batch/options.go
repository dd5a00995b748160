package batch

import (
	"errors"
	"time"

	"github.com/apache/arrow/go/v17/arrow/memory"
)

// ErrExists is the cause of the error Run returns when the study's output
// folder already exists and Options.Force is not set.
var ErrExists = errors.New("output folder exists (use --force to replace it)")

// Options configures [Run]. The zero value runs the whole study with one
// worker per CPU into the current folder.
type Options struct {
	Out       string           // parent folder; a study writes into Out/<study name>
	Workers   int              // goroutines solving cases; 0 means runtime.NumCPU()
	Force     bool             // replace an existing output folder
	BatchRows int              // cases per Arrow record batch; 0 means DefaultBatchRows
	Progress  Progress         // nil for none
	Version   string           // program version, written to run.json
	Alloc     memory.Allocator // nil means memory.DefaultAllocator
	Now       func() time.Time // clock for run.json timings; nil means time.Now

	// sobolRuns, when set, holds the outputs of every run of the Sobol
	// design, gathered from shards: the summaries reduce them instead of
	// solving the design again.
	sobolRuns [][]float64

	// Shard, when not zero, makes Run solve only that shard of the cases
	// and write it into Out/<study name>/shards/ (see [RunShard]).
	Shard Shard
	// Resume keeps outputs that are complete and match the study, seed
	// and version (checked by their SHA-256 sums) and redoes any other:
	// Run then returns the kept outputs' Info with Skipped set. Force is
	// then redundant.
	Resume bool
	// Source is the study file's bytes, which a shard stores so that a
	// merge can parse the study again. Nil means reading st.Source again
	// (the embedded text for the demo study). Either way its SHA-256 must
	// be st.Hash.
	Source []byte
}

// DefaultBatchRows is the number of cases per record batch of cases.arrow.
const DefaultBatchRows = 8192

// Progress receives a run's progress. Calls come from one goroutine.
type Progress interface {
	// Start announces a phase ("solving", "summaries", "tornado", "sobol")
	// of the study with the given number of units (cases or solves).
	Start(study, phase string, total int)
	// Add reports n more units done.
	Add(n int)
	// Finish ends the phase.
	Finish()
}
