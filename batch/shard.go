package batch

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"github.com/sweepstat/sweepstat/studies"
)

// ShardsDir is the folder, inside a study's output folder, that its
// shards write into.
const ShardsDir = "shards"

// Environment variables [ShardFromEnv] reads.
const (
	EnvSlurmTaskID    = "SLURM_ARRAY_TASK_ID"
	EnvSlurmTaskCount = "SLURM_ARRAY_TASK_COUNT"
	EnvSlurmTaskMin   = "SLURM_ARRAY_TASK_MIN"
	EnvSlurmTaskMax   = "SLURM_ARRAY_TASK_MAX"
	EnvSlurmTaskStep  = "SLURM_ARRAY_TASK_STEP"
	EnvJobIndex       = "JOB_COMPLETION_INDEX"  // Kubernetes Indexed Job, 0-based
	EnvShardCount     = "SWEEPSTAT_SHARD_COUNT" // ours: the number of shards when the scheduler does not say
)

// MaxShards is the largest number of shards of one study.
const MaxShards = 100_000

// ErrShard is the cause of the errors of [ParseShard] and [ShardFromEnv]:
// a shard that is malformed, out of range or not given by the
// environment.
var ErrShard = errors.New("bad shard")

// Shard is part K of N (1 ≤ K ≤ N) of a study's cases. The zero Shard
// stands for the whole study.
//
// Shards split the study at record-batch boundaries: with B the number of
// record batches of the whole cases file (rows per batch R, the last one
// possibly short), shard K holds batches ⌊(K−1)·B/N⌋ to ⌊K·B/N⌋ − 1, so
// every shard holds whole batches, the last shard ends with the short
// one, and their record batches laid end to end are exactly those of one
// run's cases.arrow. With N > B some shards are empty.
type Shard struct{ K, N int }

// IsZero reports whether s is the zero Shard (the whole study).
func (s Shard) IsZero() bool { return s == Shard{} }

// String returns "K/N".
func (s Shard) String() string { return fmt.Sprintf("%d/%d", s.K, s.N) }

// Validate checks 1 ≤ K ≤ N ≤ MaxShards; the error wraps [ErrShard].
func (s Shard) Validate() error {
	if s.N < 1 || s.N > MaxShards {
		return fmt.Errorf("%w: %s: the number of shards must be 1 to %d", ErrShard, s, MaxShards)
	}
	if s.K < 1 || s.K > s.N {
		return fmt.Errorf("%w: %s: the shard must be 1 to %d", ErrShard, s, s.N)
	}
	return nil
}

// Range returns the case indices [lo, hi) of s in a study of cases cases
// written in record batches of batchRows rows (DefaultBatchRows when
// batchRows ≤ 0). The zero Shard gives [0, cases). It panics on a shard
// that does not pass Validate.
func (s Shard) Range(cases, batchRows int) (lo, hi int) {
	if s.IsZero() {
		return 0, cases
	}
	if s.Validate() != nil {
		panic("batch: Range of invalid shard " + s.String())
	}
	if batchRows <= 0 {
		batchRows = DefaultBatchRows
	}
	b := (cases + batchRows - 1) / batchRows
	first := (s.K - 1) * b / s.N
	end := s.K * b / s.N
	return min(first*batchRows, cases), min(end*batchRows, cases)
}

// CasesFile is the name of s's part of cases.arrow in the shards folder:
// cases.K-of-N.arrow, K zero-padded to the width of N so that names sort
// in shard order.
func (s Shard) CasesFile() string { return "cases." + s.tag() + ".arrow" }

// ManifestFile is the name of s's manifest in the shards folder:
// manifest.K-of-N.json.
func (s Shard) ManifestFile() string { return "manifest." + s.tag() + ".json" }

func (s Shard) tag() string {
	w := len(strconv.Itoa(s.N))
	return fmt.Sprintf("%0*d-of-%d", w, s.K, s.N)
}

// parseTag reads the K-of-N part of a shard file name with the given
// prefix and suffix.
func parseTag(name, prefix, suffix string) (Shard, bool) {
	t, ok := strings.CutPrefix(name, prefix)
	if !ok {
		return Shard{}, false
	}
	if t, ok = strings.CutSuffix(t, suffix); !ok {
		return Shard{}, false
	}
	ks, ns, ok := strings.Cut(t, "-of-")
	if !ok {
		return Shard{}, false
	}
	k, err1 := strconv.Atoi(ks)
	n, err2 := strconv.Atoi(ns)
	if err1 != nil || err2 != nil || k < 0 || n < 0 {
		return Shard{}, false
	}
	return Shard{K: k, N: n}, true
}

// ParseShard parses "K/N", 1 ≤ K ≤ N ≤ MaxShards. Errors wrap [ErrShard].
func ParseShard(text string) (Shard, error) {
	ks, ns, ok := strings.Cut(strings.TrimSpace(text), "/")
	if !ok {
		return Shard{}, fmt.Errorf("%w: %q is not K/N (shard K of N, 1 ≤ K ≤ N)", ErrShard, text)
	}
	k, err1 := strconv.Atoi(strings.TrimSpace(ks))
	n, err2 := strconv.Atoi(strings.TrimSpace(ns))
	if err1 != nil || err2 != nil {
		return Shard{}, fmt.Errorf("%w: %q is not K/N with whole numbers K and N", ErrShard, text)
	}
	s := Shard{K: k, N: n}
	return s, s.Validate()
}

// ShardFromEnv returns the shard of a cluster array task from its
// environment, read through getenv (os.Getenv in the program). count, when
// positive, is the number of shards given on the command line.
//
// Slurm job arrays: SLURM_ARRAY_TASK_ID, numbered from
// SLURM_ARRAY_TASK_MIN in steps of SLURM_ARRAY_TASK_STEP (0 and 1 when not
// set); the count is SLURM_ARRAY_TASK_COUNT or, when that is not set,
// (MAX − MIN)/STEP + 1. So `sbatch --array=1-8` and `--array=0-7` both
// give shards 1/8 … 8/8.
//
// Kubernetes Indexed Jobs: JOB_COMPLETION_INDEX, 0-based; the count is
// count or, when that is 0, SWEEPSTAT_SHARD_COUNT (the Job's completions).
//
// Slurm's variables win when both are set. A count that disagrees with
// the scheduler's, or no variable at all, is an error wrapping [ErrShard]
// that names the variables.
func ShardFromEnv(getenv func(string) string, count int) (Shard, error) {
	num := func(name string) (int, bool, error) {
		v := strings.TrimSpace(getenv(name))
		if v == "" {
			return 0, false, nil
		}
		n, err := strconv.Atoi(v)
		if err != nil {
			return 0, true, fmt.Errorf("%w: %s=%q is not a whole number", ErrShard, name, v)
		}
		return n, true, nil
	}
	check := func(s Shard, from string) (Shard, error) {
		if count > 0 && count != s.N {
			return Shard{}, fmt.Errorf("%w: --shard-count %d disagrees with %s (%d tasks)", ErrShard, count, from, s.N)
		}
		if err := s.Validate(); err != nil {
			return Shard{}, fmt.Errorf("%w (from %s)", err, from)
		}
		return s, nil
	}

	id, slurm, err := num(EnvSlurmTaskID)
	if err != nil {
		return Shard{}, err
	}
	if slurm {
		lo, hasMin, err := num(EnvSlurmTaskMin)
		if err != nil {
			return Shard{}, err
		}
		hi, hasMax, err := num(EnvSlurmTaskMax)
		if err != nil {
			return Shard{}, err
		}
		step, hasStep, err := num(EnvSlurmTaskStep)
		if err != nil {
			return Shard{}, err
		}
		if !hasStep {
			step = 1
		}
		if step < 1 {
			return Shard{}, fmt.Errorf("%w: %s=%d", ErrShard, EnvSlurmTaskStep, step)
		}
		n, hasCount, err := num(EnvSlurmTaskCount)
		if err != nil {
			return Shard{}, err
		}
		switch {
		case hasCount:
		case hasMin && hasMax:
			n = (hi-lo)/step + 1
		default:
			return Shard{}, fmt.Errorf("%w: %s is set but neither %s nor %s and %s are: cannot tell the number of shards",
				ErrShard, EnvSlurmTaskID, EnvSlurmTaskCount, EnvSlurmTaskMin, EnvSlurmTaskMax)
		}
		if (id-lo)%step != 0 || id < lo {
			return Shard{}, fmt.Errorf("%w: %s=%d is not %s=%d plus a multiple of %s=%d",
				ErrShard, EnvSlurmTaskID, id, EnvSlurmTaskMin, lo, EnvSlurmTaskStep, step)
		}
		k := (id-lo)/step + 1
		if k > n {
			return Shard{}, fmt.Errorf("%w: %s=%d is task %d of an array of %d; number the array from %s or keep it contiguous",
				ErrShard, EnvSlurmTaskID, id, k, n, EnvSlurmTaskMin)
		}
		return check(Shard{K: k, N: n}, "the Slurm array")
	}

	idx, k8s, err := num(EnvJobIndex)
	if err != nil {
		return Shard{}, err
	}
	if k8s {
		n := count
		if n <= 0 {
			v, ok, err := num(EnvShardCount)
			if err != nil {
				return Shard{}, err
			}
			if !ok {
				return Shard{}, fmt.Errorf("%w: %s is set but not the number of shards: give --shard-count or set %s to the Job's completions",
					ErrShard, EnvJobIndex, EnvShardCount)
			}
			n = v
		}
		if idx < 0 || idx >= n {
			return Shard{}, fmt.Errorf("%w: %s=%d is not in 0 to %d", ErrShard, EnvJobIndex, idx, n-1)
		}
		return check(Shard{K: idx + 1, N: n}, "the Indexed Job")
	}
	return Shard{}, fmt.Errorf("%w: --shard auto: no array-task variable is set (%s for a Slurm job array, %s for a Kubernetes Indexed Job)",
		ErrShard, EnvSlurmTaskID, EnvJobIndex)
}

// ShardManifest is the JSON file a shard writes beside its part of
// cases.arrow, after it: a shard is complete when its manifest is there
// and the cases file has the manifest's size and SHA-256.
type ShardManifest struct {
	Study      string         `json:"study"`
	Source     string         `json:"source"`     // the study file name
	StudyHash  string         `json:"study_hash"` // SHA-256 of the study file
	Seed       uint64         `json:"seed"`
	Version    string         `json:"version"`
	Shard      int            `json:"shard"`  // K
	Shards     int            `json:"shards"` // N
	Cases      int            `json:"cases"`  // of the whole study
	First      int            `json:"first_case"`
	End        int            `json:"end_case"` // one past the last case
	Rows       int            `json:"rows"`     // End − First
	BatchRows  int            `json:"batch_rows"`
	Rejected   int            `json:"rejected"`
	RejectedBy map[string]int `json:"rejected_by_status,omitempty"`
	File       string         `json:"file"`  // the cases file, in the shards folder
	Bytes      int64          `json:"bytes"` // its size
	SHA256     string         `json:"sha256"`
	Workers    int            `json:"workers"`
	Started    string         `json:"started"` // RFC 3339, UTC
	Seconds    float64        `json:"solve_seconds"`
	StudyText  string         `json:"study_text"`           // the study file's bytes
	TableText  string         `json:"table_text,omitempty"` // a table study's measured curves, byte for byte
	TableName  string         `json:"table_name,omitempty"` // the file they were read from

	// The shard's rows [SobolFirst, SobolEnd) of the Sobol design, when
	// the study asks for Sobol indices, and their file.
	SobolFirst  int    `json:"sobol_first_row,omitempty"`
	SobolEnd    int    `json:"sobol_end_row,omitempty"`
	SobolFile   string `json:"sobol_file,omitempty"`
	SobolBytes  int64  `json:"sobol_bytes,omitempty"`
	SobolSHA256 string `json:"sobol_sha256,omitempty"`

	// Skipped is set on what RunShard returns when Options.Resume found
	// the shard complete.
	Skipped bool `json:"-"`
}

// Of returns the shard m describes.
func (m *ShardManifest) Of() Shard { return Shard{K: m.Shard, N: m.Shards} }

// info describes the shard as an Info, for the command line.
func (m *ShardManifest) info(st *studies.Study) *Info {
	return &Info{
		Study: m.Study, Source: m.Source, StudyHash: m.StudyHash, Seed: m.Seed, Sampling: st.Sampling,
		Version: m.Version, Cases: m.Rows, Rejected: m.Rejected, RejectedBy: m.RejectedBy,
		Workers: m.Workers, Percentiles: st.Report.Percentiles, Started: m.Started,
		Seconds: map[string]float64{"solve": m.Seconds}, CasesPerSec: float64(m.Rows) / max(m.Seconds, 1e-9),
		Files:  []string{filepath.Join(ShardsDir, m.File), filepath.Join(ShardsDir, m.Of().ManifestFile())},
		SHA256: map[string]string{filepath.Join(ShardsDir, m.File): m.SHA256}, Caution: Caution,
		Shard: m.Of().String(), Skipped: m.Skipped,
	}
}

// existsError is the error of a shard whose outputs exist; it is
// [ErrExists] for errors.Is.
type existsError struct{ path string }

func (e *existsError) Error() string {
	return e.path + ": shard output exists (use --force to replace it, or --resume to keep it if complete)"
}

func (e *existsError) Is(target error) bool { return target == ErrExists }

// RunShard solves the cases of shard opt.Shard of st and writes them,
// in record batches of opt.BatchRows rows, to
// opt.Out/<st.Name>/shards/cases.K-of-N.arrow (through a temporary name),
// then the manifest manifest.K-of-N.json. Shards share the study's
// output folder: RunShard creates it if needed and touches no other
// shard's files. If this shard's files exist, it returns an error that
// is [ErrExists] unless opt.Force (redo) or opt.Resume (keep them when
// complete and matching, else redo) is set.
//
// The manifest holds the study file's bytes (opt.Source, see [Options])
// so that [Merge] can parse the study again; RunShard checks that they
// hash to st.Hash and parse to the same study.
func RunShard(ctx context.Context, st *studies.Study, opt Options) (*ShardManifest, error) {
	sh := opt.Shard
	if err := sh.Validate(); err != nil {
		return nil, err
	}
	r, err := newStudyRun(st, opt)
	if err != nil {
		return nil, err
	}
	src, err := shardSource(st, opt.Source)
	if err != nil {
		return nil, err
	}
	rows := batchRows(opt)
	lo, hi := sh.Range(st.Cases, rows)
	dir := filepath.Join(r.final, ShardsDir)
	casesPath := filepath.Join(dir, sh.CasesFile())
	manPath := filepath.Join(dir, sh.ManifestFile())

	sobolIn, err := sobolInputs(r)
	if err != nil {
		return nil, err
	}
	leaders := 0
	if sobolIn != nil {
		leaders = len(sobolIn.Leaders)
	}
	if pathExists(casesPath) || pathExists(manPath) {
		switch {
		case opt.Resume:
			if m, err := readManifest(manPath); err == nil && m.matches(st, sh, lo, hi, rows, r.opt.Version) == "" &&
				fileProblem(casesPath, m) == "" && sobolShardProblem(dir, st, m, leaders) == "" {
				m.Skipped = true
				return m, nil
			}
		case !opt.Force:
			return nil, &existsError{path: filepath.Join(dir, sh.ManifestFile())}
		}
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("creating %s: %w", dir, err)
	}
	// An old manifest must never describe the new file.
	if err := os.Remove(manPath); err != nil && !errors.Is(err, fs.ErrNotExist) {
		return nil, fmt.Errorf("replacing %s: %w", manPath, err)
	}

	start := r.now()
	rejected, sum, err := writeCases(ctx, st, r.design, casesPath, lo, hi, r.workers, r.opt, r.mem, nil, nil)
	if err != nil {
		return nil, err
	}
	solved := r.now()
	fi, err := os.Stat(casesPath)
	if err != nil {
		return nil, err
	}
	size := fi.Size()
	m := &ShardManifest{
		Study: st.Name, Source: st.Source, StudyHash: st.Hash, Seed: st.Seed, Version: r.opt.Version,
		Shard: sh.K, Shards: sh.N, Cases: st.Cases, First: lo, End: hi, Rows: hi - lo, BatchRows: rows,
		RejectedBy: rejected, File: sh.CasesFile(), Bytes: size, SHA256: sum, Workers: r.workers,
		Started: start.UTC().Format(time.RFC3339), Seconds: solved.Sub(start).Seconds(), StudyText: string(src),
		TableText: string(st.Relperm.TableData), TableName: st.Relperm.TablePath,
	}
	for _, n := range rejected {
		m.Rejected += n
	}
	if sobolIn != nil {
		m.SobolFile = sh.SobolFile()
		sobolPath := filepath.Join(dir, m.SobolFile)
		if m.SobolFirst, m.SobolEnd, err = writeShardSobol(ctx, r, sobolIn, sh, sobolPath); err != nil {
			return nil, err
		}
		if m.SobolSHA256, m.SobolBytes, err = fileSHA256(sobolPath); err != nil {
			return nil, err
		}
		m.Seconds = r.now().Sub(start).Seconds()
	}
	js, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if err := writeFileAtomic(manPath, append(js, '\n')); err != nil {
		return nil, err
	}
	return m, nil
}

// matches returns why m is not the manifest of shard sh of st over
// [lo, hi) in batches of rows written by version, or "" if it is.
func (m *ShardManifest) matches(st *studies.Study, sh Shard, lo, hi, rows int, version string) string {
	switch {
	case m.StudyHash != st.Hash:
		return "another study file"
	case m.Seed != st.Seed:
		return "another seed"
	case m.Version != version:
		return "another version"
	case m.Of() != sh:
		return "another shard"
	case m.First != lo || m.End != hi || m.Rows != hi-lo || m.Cases != st.Cases:
		return "another case range"
	case m.BatchRows != rows:
		return "another batch size"
	case m.File != sh.CasesFile():
		return "another file"
	}
	return ""
}

// fileProblem returns what is wrong with the shard cases file at path
// against its manifest m (missing, truncated, checksum), or "".
func fileProblem(path string, m *ShardManifest) string {
	fi, err := os.Stat(path)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return "is missing"
	case err != nil:
		return err.Error()
	case fi.Size() < m.Bytes:
		return fmt.Sprintf("is truncated (%d of %d bytes)", fi.Size(), m.Bytes)
	case fi.Size() != m.Bytes:
		return fmt.Sprintf("has %d bytes, its manifest says %d", fi.Size(), m.Bytes)
	}
	sum, _, err := fileSHA256(path)
	if err != nil {
		return err.Error()
	}
	if sum != m.SHA256 {
		return fmt.Sprintf("does not match its manifest's checksum (SHA-256 %s, manifest %s)", short(sum), short(m.SHA256))
	}
	return ""
}

func short(h string) string {
	if len(h) > 12 {
		return h[:12] + "…"
	}
	return h
}

// maxManifestSize bounds what readManifest reads: the study text
// (at most studies.MaxFileSize) escaped, plus the fields.
const maxManifestSize = 8*studies.MaxFileSize + 1<<16

// readManifest reads and decodes the manifest at path.
func readManifest(path string) (*ShardManifest, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	data, err := io.ReadAll(io.LimitReader(f, maxManifestSize+1))
	if err != nil {
		return nil, err
	}
	if len(data) > maxManifestSize {
		return nil, fmt.Errorf("larger than %d bytes", maxManifestSize)
	}
	m := new(ShardManifest)
	if err := json.Unmarshal(data, m); err != nil {
		return nil, err
	}
	return m, nil
}

// shardSource returns the bytes of st's study file for a shard
// manifest: src when given, else what [studySource] finds. They must hash
// to st.Hash and parse to a study with st's name, cases, seed, sampling
// and Sobol size (a study changed in memory could not be parsed again by
// a merge).
func shardSource(st *studies.Study, src []byte) ([]byte, error) {
	if src == nil {
		b, ok := studySource(st)
		if !ok {
			return nil, fmt.Errorf("%s changed since it was loaded, or cannot be read again for the shard manifest", st.Source)
		}
		src = b
	}
	sum := sha256.Sum256(src)
	if hex.EncodeToString(sum[:]) != st.FileHash {
		return nil, fmt.Errorf("%s changed since it was loaded (its SHA-256 is no longer the study's)", st.Source)
	}
	again, err := studies.ParseWith(st.Source, src, textTables(st.Relperm.TablePath, string(st.Relperm.TableData)))
	if err != nil {
		return nil, fmt.Errorf("parsing %s again: %w", st.Source, err)
	}
	if again.Name != st.Name || again.Cases != st.Cases || again.Seed != st.Seed ||
		again.Sensitivity != st.Sensitivity || again.Sampling != st.Sampling {
		return nil, fmt.Errorf("batch: study %s differs from its file %s (changed after parsing)", st.Name, st.Source)
	}
	return src, nil
}

// fileSHA256 returns the lower-case hex SHA-256 and the size of the file
// at path.
func fileSHA256(path string) (string, int64, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", 0, err
	}
	defer f.Close()
	h := sha256.New()
	n, err := io.Copy(h, f)
	if err != nil {
		return "", 0, fmt.Errorf("reading %s: %w", path, err)
	}
	return hex.EncodeToString(h.Sum(nil)), n, nil
}

func pathExists(path string) bool {
	_, err := os.Lstat(path)
	return err == nil
}

func batchRows(opt Options) int {
	if opt.BatchRows > 0 {
		return opt.BatchRows
	}
	return DefaultBatchRows
}
