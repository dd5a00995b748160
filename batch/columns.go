package batch

import (
	"github.com/apache/arrow/go/v17/arrow/memory"
)

// readColumns reads the named float64 columns of the Arrow file at path,
// at most limit rows of each (0: all), in one pass through the Arrow
// library. The summaries and the report read cases.arrow through
// columnFile instead, one column's buffers at a time.
func readColumns(path string, names []string, limit int, mem memory.Allocator) ([][]float64, error) {
	if mem == nil {
		mem = memory.DefaultAllocator
	}
	out := make([][]float64, len(names))
	err := scanFloat64(path, mem, names, func(_ int, cols [][]float64) error {
		for k, v := range cols {
			if limit > 0 {
				v = v[:min(len(v), limit-len(out[k]))]
			}
			out[k] = append(out[k], v...)
		}
		if limit > 0 && len(names) > 0 && len(out[0]) >= limit {
			return errStopScan
		}
		return nil
	})
	return out, err
}
