package batch

import (
	"github.com/apache/arrow/go/v17/arrow/memory"
)

// columnBudget is the memory the summaries may spend on columns read
// ahead of use. Reading several columns per pass over cases.arrow keeps
// the number of passes small at 10 million cases (each pass decodes every
// record batch) while memory stays bounded.
const columnBudget = 96 << 20

// columnSource hands out float64 columns of an Arrow file one at a time,
// in an order planned ahead: on a miss it reads the asked column and the
// next ones of the plan in one pass, as many as fit the budget, and keeps
// them until asked. Each column is handed out once (the caller may sort it
// in place).
type columnSource struct {
	path  string
	mem   memory.Allocator
	limit int // read at most this many rows (0: all)
	plan  []string
	group int
	cache map[string][]float64
	done  map[string]bool
}

func newColumnSource(path string, mem memory.Allocator, rows, limit int, plan []string) *columnSource {
	if limit > 0 && rows > limit {
		rows = limit
	}
	group := max(1, columnBudget/max(8*rows, 1))
	return &columnSource{path: path, mem: mem, limit: limit, plan: plan, group: group,
		cache: map[string][]float64{}, done: map[string]bool{}}
}

// column returns the named column.
func (c *columnSource) column(name string) ([]float64, error) {
	if v, ok := c.cache[name]; ok {
		delete(c.cache, name)
		c.done[name] = true
		return v, nil
	}
	names := []string{name}
	seen := false
	for _, n := range c.plan {
		if len(names) >= c.group {
			break
		}
		if n == name {
			seen = true
			continue
		}
		if seen && !c.done[n] && c.cache[n] == nil {
			names = append(names, n)
		}
	}
	cols, err := readColumns(c.path, names, c.limit, c.mem)
	if err != nil {
		return nil, err
	}
	for i, n := range names[1:] {
		c.cache[n] = cols[i+1]
	}
	c.done[name] = true
	return cols[0], nil
}

// readColumns reads the named float64 columns of the Arrow file at path,
// at most limit rows of each (0: all), in one pass.
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
