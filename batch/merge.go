package batch

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"maps"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/apache/arrow/go/v17/arrow"
	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/memory"
	"golang.org/x/sync/errgroup"

	"github.com/sweepstat/sweepstat/sampler"
	"github.com/sweepstat/sweepstat/studies"
)

// ErrShards is the cause of a [*MergeError]: shard outputs that are
// missing, incomplete, duplicated or from different runs.
var ErrShards = errors.New("shard outputs are incomplete or do not match")

// MergeProblem is one thing wrong with the shards of one study.
type MergeProblem struct {
	Study string // the study folder's name
	Msg   string
}

// MergeError lists every problem [CheckShards] found under Dir. Nothing
// was written.
type MergeError struct {
	Dir      string
	Problems []MergeProblem
}

func (e *MergeError) Error() string {
	var b strings.Builder
	n := len(e.Problems)
	fmt.Fprintf(&b, "cannot merge %s: %d problem", e.Dir, n)
	if n != 1 {
		b.WriteString("s")
	}
	b.WriteString(" with the shards; nothing was written")
	for _, p := range e.Problems {
		fmt.Fprintf(&b, "\n  %s: %s", p.Study, p.Msg)
	}
	return b.String()
}

// Unwrap returns ErrShards.
func (e *MergeError) Unwrap() error { return ErrShards }

// MergePlan is one study's shards, checked and ready to merge.
type MergePlan struct {
	Dir    string           // the study's output folder, holding shards/
	Study  *studies.Study   // parsed again from the shards' copy of the study file
	Shards []*ShardManifest // shards 1 … N, in order
	Source []byte           // the study file's bytes
}

// CheckShards finds every study under dir (the --out folder of the shard
// runs) that has a shards folder, and checks its shards: each of 1 … N
// present exactly once with the same N, its manifest complete and naming
// itself, all from the same study file (by SHA-256), seed, version and
// batch size, with the case range the shard arithmetic gives, and its
// cases file there with the manifest's size and SHA-256 (every file is
// read once, by up to workers goroutines). Folders without shards are
// left alone. It writes nothing, and returns the plans in folder order,
// or a [*MergeError] listing every problem; no study with shards under
// dir is an error wrapping ErrShards too.
func CheckShards(dir string, workers int) ([]*MergePlan, error) {
	ents, err := os.ReadDir(dir)
	if err != nil {
		return nil, fmt.Errorf("%w: %v", ErrShards, err)
	}
	var plans []*MergePlan
	merr := &MergeError{Dir: dir}
	for _, e := range ents {
		name := e.Name()
		if !e.IsDir() || strings.HasPrefix(name, ".") {
			continue
		}
		sd := filepath.Join(dir, name)
		if fi, err := os.Stat(filepath.Join(sd, ShardsDir)); err != nil || !fi.IsDir() {
			continue
		}
		p, probs := checkStudy(sd, workers)
		for _, m := range probs {
			merr.Problems = append(merr.Problems, MergeProblem{Study: name, Msg: m})
		}
		if len(probs) == 0 {
			plans = append(plans, p)
		}
	}
	if len(merr.Problems) > 0 {
		return nil, merr
	}
	if len(plans) == 0 {
		return nil, fmt.Errorf("%w: no shard outputs under %s (no <study>/%s/ folder)", ErrShards, dir, ShardsDir)
	}
	return plans, nil
}

// identity is what every shard of one merge must share.
type identity struct {
	hash    string
	seed    uint64
	version string
}

func (id identity) differs(o identity) string {
	var d []string
	if id.hash != o.hash {
		d = append(d, fmt.Sprintf("study file SHA-256 %s (the others: %s)", short(id.hash), short(o.hash)))
	}
	if id.seed != o.seed {
		d = append(d, fmt.Sprintf("seed %d (the others: %d)", id.seed, o.seed))
	}
	if id.version != o.version {
		d = append(d, fmt.Sprintf("version %q (the others: %q)", id.version, o.version))
	}
	return strings.Join(d, ", ")
}

// checkStudy checks the shards of the study folder sd.
func checkStudy(sd string, workers int) (*MergePlan, []string) {
	var probs []string
	bad := func(format string, args ...any) { probs = append(probs, fmt.Sprintf(format, args...)) }
	shardsDir := filepath.Join(sd, ShardsDir)
	ents, err := os.ReadDir(shardsDir)
	if err != nil {
		return nil, []string{err.Error()}
	}
	rel := func(name string) string { return filepath.Join(ShardsDir, name) }

	byShard := map[Shard]*ShardManifest{}
	from := map[Shard]string{} // manifest file of each shard
	casesFiles := map[Shard]bool{}
	reported := map[Shard]bool{} // shards with a manifest file, good or bad
	for _, e := range ents {
		name := e.Name()
		if s, ok := parseTag(name, "cases.", ".arrow"); ok {
			casesFiles[s] = true
			continue
		}
		named, ok := parseTag(name, "manifest.", ".json")
		if !ok {
			continue
		}
		reported[named] = true
		m, err := readManifest(filepath.Join(shardsDir, name))
		if err != nil {
			bad("%s is not a complete manifest (%v)", rel(name), err)
			continue
		}
		s := m.Of()
		if s != named {
			bad("%s describes shard %s, not %s", rel(name), s, named)
			continue
		}
		if prev, dup := from[s]; dup {
			bad("shard %s appears twice: %s and %s", s, rel(prev), rel(name))
			continue
		}
		if err := s.Validate(); err != nil {
			bad("%s: %v", rel(name), err)
			continue
		}
		byShard[s], from[s] = m, name
	}
	if len(byShard) == 0 {
		if len(probs) == 0 {
			bad("no shard manifest in %s/ (no shard finished)", ShardsDir)
		}
		return nil, probs
	}

	// One split only.
	count := map[int][]int{}
	for s := range byShard {
		count[s.N] = append(count[s.N], s.K)
	}
	if len(count) > 1 {
		var parts []string
		for _, n := range slices.Sorted(maps.Keys(count)) {
			ks := count[n]
			if len(ks) > 4 {
				parts = append(parts, fmt.Sprintf("%d shards of %d", len(ks), n))
				continue
			}
			slices.Sort(ks)
			for _, k := range ks {
				parts = append(parts, Shard{K: k, N: n}.String())
			}
		}
		bad("shards of different splits (%s): a merge takes the N shards of one split; remove the others",
			strings.Join(parts, ", "))
		return nil, probs
	}
	var n int
	for k := range count {
		n = k
	}
	ordered := make([]*ShardManifest, 0, n)
	for k := 1; k <= n; k++ {
		s := Shard{K: k, N: n}
		m, ok := byShard[s]
		switch {
		case ok:
			ordered = append(ordered, m)
		case reported[s]:
		case casesFiles[s]:
			bad("shard %s is incomplete: %s has no %s (the shard did not finish; run it again with --resume)",
				s, rel(s.CasesFile()), rel(s.ManifestFile()))
		default:
			bad("shard %s is missing (no %s)", s, rel(s.ManifestFile()))
		}
	}

	// The identity most shards share is the reference; shards that differ
	// are from another run.
	votes := map[identity]int{}
	for _, m := range ordered {
		votes[identity{m.StudyHash, m.Seed, m.Version}]++
	}
	var ref identity
	best := 0
	for _, m := range ordered { // in shard order, so ties go to the lowest shard
		id := identity{m.StudyHash, m.Seed, m.Version}
		if votes[id] > best {
			ref, best = id, votes[id]
		}
	}
	var refM *ShardManifest
	var good []*ShardManifest
	for _, m := range ordered {
		id := identity{m.StudyHash, m.Seed, m.Version}
		if id != ref {
			bad("shard %s is from another run: %s", m.Of(), id.differs(ref))
			continue
		}
		if refM == nil {
			refM = m
		}
		good = append(good, m)
	}

	// The study itself, from the reference shard's copy.
	var st *studies.Study
	src := []byte(refM.StudyText)
	var opts studies.ParseOptions
	if refM.TableText != "" {
		opts = textTables(refM.TableName, refM.TableText)
	}
	if st, err = studies.ParseWith(refM.Source, src, opts); err != nil {
		bad("shard %s: the study text in %s does not parse: %v", refM.Of(), rel(from[refM.Of()]), err)
		st = nil
	} else if st.Hash != refM.StudyHash {
		bad("shard %s: the study text in %s does not hash to its study_hash", refM.Of(), rel(from[refM.Of()]))
		st = nil
	} else if st.Name != filepath.Base(sd) {
		bad("the shards are of study %q, but the folder is %s", st.Name, filepath.Base(sd))
	}

	for _, m := range good {
		s := m.Of()
		if st != nil {
			lo, hi := s.Range(st.Cases, m.BatchRows)
			switch {
			case m.Study != st.Name || m.Cases != st.Cases:
				bad("shard %s: manifest says study %q of %d cases, the study file %q of %d", s, m.Study, m.Cases, st.Name, st.Cases)
			case m.BatchRows != refM.BatchRows:
				bad("shard %s was written in batches of %d rows, shard %s of %d", s, m.BatchRows, refM.Of(), refM.BatchRows)
			case m.First != lo || m.End != hi || m.Rows != hi-lo:
				bad("shard %s holds cases %d to %d (%d rows); shard %s of %d cases in batches of %d is cases %d to %d",
					s, m.First, m.End-1, m.Rows, s, st.Cases, m.BatchRows, lo, hi-1)
			}
		}
		if m.File != s.CasesFile() {
			bad("shard %s: its manifest names the file %q, not %s", s, m.File, s.CasesFile())
		}
	}

	// Files last: they take the time.
	leaders := 0 // the Sobol design's inputs: uncertain parameters that lead
	if st != nil {
		specs := st.Specs()
		for _, q := range st.Uncertain() {
			if specs[q].Kind != sampler.SameAs {
				leaders++
			}
		}
	}
	fileProbs := make([]string, len(good))
	g := new(errgroup.Group)
	g.SetLimit(max(workers, 1))
	for i, m := range good {
		if m.File != m.Of().CasesFile() {
			continue
		}
		g.Go(func() error {
			if p := fileProblem(filepath.Join(shardsDir, m.File), m); p != "" {
				fileProbs[i] = fmt.Sprintf("shard %s: %s %s", m.Of(), rel(m.File), p)
			} else if p := sobolShardProblem(shardsDir, st, m, leaders); st != nil && p != "" {
				fileProbs[i] = fmt.Sprintf("shard %s: %s", m.Of(), p)
			}
			return nil
		})
	}
	g.Wait()
	for _, p := range fileProbs {
		if p != "" {
			probs = append(probs, p)
		}
	}
	if len(probs) > 0 {
		return nil, probs
	}
	return &MergePlan{Dir: sd, Study: st, Shards: ordered, Source: src}, nil
}

// Merge checks the shards of every study under dir ([CheckShards]) and,
// if all are in order, merges each study ([MergeStudy]). It returns the
// merged studies' Infos; a study that fails to merge does not stop the
// others, and the error then joins every failure, each prefixed by the
// study name. Of opt, Out, Force, Shard, Resume, BatchRows and Source are
// not used.
func Merge(ctx context.Context, dir string, opt Options) ([]*Info, error) {
	plans, err := CheckShards(dir, opt.Workers)
	if err != nil {
		return nil, err
	}
	var infos []*Info
	var errs []error
	for _, p := range plans {
		if err := ctx.Err(); err != nil {
			return infos, err
		}
		info, err := MergeStudy(ctx, p, opt)
		if err != nil {
			errs = append(errs, fmt.Errorf("%s: %w", p.Study.Name, err))
			continue
		}
		infos = append(infos, info)
	}
	return infos, errors.Join(errs...)
}

// MergeStudy writes the outputs of a checked study into p.Dir exactly as
// [Run] writes them for the whole study: the shards' record batches laid
// end to end into cases.arrow (byte for byte the file one run with the
// shards' batch size writes), then the summaries, the report and
// run.json, which records the shards' version, their total solve time as
// "solve" and the number of shards. Everything is staged beside p.Dir and
// moved in file by file, run.json last (after an old run.json is
// removed), so an interrupted merge never leaves a folder that looks
// finished; the shards folder is kept. Of opt, Out, Force, Shard, Resume,
// BatchRows and Source are not used.
func MergeStudy(ctx context.Context, p *MergePlan, opt Options) (*Info, error) {
	first := p.Shards[0]
	o := opt
	o.Out, o.Version, o.BatchRows = filepath.Dir(p.Dir), first.Version, first.BatchRows
	o.Shard, o.Resume, o.Force, o.Source = Shard{}, false, false, p.Source
	r, err := newStudyRun(p.Study, o)
	if err != nil {
		return nil, err
	}
	if err := r.begin(); err != nil {
		return nil, err
	}
	ok := false
	defer func() { r.end(ok) }()

	start := r.now()
	info := r.info
	info.Started = first.Started
	info.Shards = len(p.Shards)
	rejected := map[string]int{}
	solve := 0.0
	for _, m := range p.Shards {
		for s, n := range m.RejectedBy {
			rejected[s] += n
		}
		solve += m.Seconds
		if m.Started < info.Started {
			info.Started = m.Started
		}
	}
	if err := mergeCases(ctx, p, filepath.Join(r.stage, CasesFile), r.opt, r.mem, &r.durable); err != nil {
		return nil, err
	}
	if in, err := sobolInputs(r); err != nil {
		return nil, err
	} else if in != nil {
		// The shards solved the Sobol design's rows too: gather them.
		if r.opt.sobolRuns, err = readShardSobol(p, in, r.mem); err != nil {
			return nil, err
		}
	}
	merged := r.now()
	info.setRejected(rejected)
	info.Seconds["solve"] = solve
	info.Seconds["merge"] = merged.Sub(start).Seconds()
	info.CasesPerSec = float64(p.Study.Cases) / max(solve, 1e-9)
	if err := r.finish(ctx, start, merged); err != nil {
		return nil, err
	}
	if err := moveIn(r.stage, r.final); err != nil {
		return nil, err
	}
	ok = true
	return info, nil
}

// mergeCases writes the record batches of p's shard files, in shard
// order, into an Arrow IPC file at path with the schema and writer
// settings of [writeCases]. It checks each batch's schema, size and first
// case index, and each shard's row count.
func mergeCases(ctx context.Context, p *MergePlan, path string, opt Options, mem memory.Allocator, g *errgroup.Group) error {
	st := p.Study
	schema := casesSchema(st, st.Model().Outputs(st.Report.PVI))
	w, err := newIPCWriter(path, schema, mem)
	if err != nil {
		return err
	}
	committed := false
	defer func() {
		if !committed {
			w.abort()
		}
	}()
	if opt.Progress != nil {
		opt.Progress.Start(st.Name, "merging", st.Cases)
		defer opt.Progress.Finish()
	}
	next := 0
	for _, m := range p.Shards {
		file := filepath.Join(p.Dir, ShardsDir, m.File)
		rows := 0
		err := forEachRecord(file, mem, func(rec arrow.Record) error {
			if err := ctx.Err(); err != nil {
				return err
			}
			if !rec.Schema().Equal(schema) {
				return fmt.Errorf("%s: %w: its columns are not those of the study's cases file", file, ErrShards)
			}
			n := int(rec.NumRows())
			c, ok := rec.Column(0).(*array.Int64)
			if n == 0 || n > m.BatchRows || !ok || c.Value(0) != int64(next) {
				return fmt.Errorf("%s: %w: record batch at case %d is not the next one", file, ErrShards, next)
			}
			out := array.NewRecord(schema, rec.Columns(), rec.NumRows())
			defer out.Release()
			if err := w.write(out); err != nil {
				return err
			}
			rows += n
			next += n
			if opt.Progress != nil {
				opt.Progress.Add(n)
			}
			return nil
		})
		if err != nil {
			return err
		}
		if rows != m.Rows {
			return fmt.Errorf("%s: %w: %d rows, its manifest says %d", file, ErrShards, rows, m.Rows)
		}
	}
	if next != st.Cases {
		return fmt.Errorf("%w: the shards hold %d cases, the study %d", ErrShards, next, st.Cases)
	}
	committed = true
	return w.commit(g)
}

// moveIn moves every file and folder of the staging folder stage into
// final, replacing what is there under the same name (a folder whole),
// run.json last after removing the old one, then removes stage.
func moveIn(stage, final string) error {
	ents, err := os.ReadDir(stage)
	if err != nil {
		return err
	}
	if err := os.Remove(filepath.Join(final, RunFile)); err != nil && !errors.Is(err, fs.ErrNotExist) {
		return fmt.Errorf("replacing %s: %w", filepath.Join(final, RunFile), err)
	}
	for _, e := range ents {
		name := e.Name()
		if name == RunFile || name == ShardsDir {
			continue
		}
		dst := filepath.Join(final, name)
		if e.IsDir() {
			// A folder (the charts) cannot replace a folder by a rename.
			if err := os.RemoveAll(dst); err != nil {
				return fmt.Errorf("replacing %s: %w", dst, err)
			}
		}
		if err := os.Rename(filepath.Join(stage, name), dst); err != nil {
			return fmt.Errorf("moving %s into %s: %w", name, final, err)
		}
	}
	if err := os.Rename(filepath.Join(stage, RunFile), filepath.Join(final, RunFile)); err != nil {
		return fmt.Errorf("moving %s into %s: %w", RunFile, final, err)
	}
	return os.RemoveAll(stage)
}
