package batch

// Info is the content of run.json: what was run, with what, and how long
// it took.
type Info struct {
	Study       string             `json:"study"`
	Source      string             `json:"source"`
	StudyHash   string             `json:"study_hash"` // SHA-256 of the study file
	Seed        uint64             `json:"seed"`
	Sampling    string             `json:"sampling"`
	Version     string             `json:"version"`
	Cases       int                `json:"cases"`
	Rejected    int                `json:"rejected"`
	RejectedBy  map[string]int     `json:"rejected_by_status,omitempty"`
	Workers     int                `json:"workers"`
	Percentiles string             `json:"percentiles"`
	Started     string             `json:"started"` // RFC 3339, UTC
	Seconds     map[string]float64 `json:"seconds"` // wall time by phase
	CasesPerSec float64            `json:"cases_per_second"`
	Files       []string           `json:"files"`
	SHA256      map[string]string  `json:"sha256,omitempty"` // of each file of Files but run.json
	Shards      int                `json:"shards,omitempty"` // shards merged into these outputs; 0 for one run
	Caution     string             `json:"caution"`

	// Shard is "K/N" in the Info Run returns for a shard; such an Info
	// describes the shard's cases only and is not written to run.json.
	Shard string `json:"-"`
	// Skipped is set in the Info Run returns when Options.Resume found
	// the outputs complete and kept them.
	Skipped bool `json:"-"`

	// casesSHA256 is the SHA-256 of cases.arrow when it was hashed as it
	// was written, "" otherwise (run.json's sums are then read from the
	// files).
	casesSHA256 string
}

// Caution is the statement every report and run.json carries.
const Caution = "Screening estimates from a simplified one-dimensional displacement model " +
	"(Buckley–Leverett with gravity, no capillary pressure). They are not a reserves " +
	"certification or a storage permit assessment; the applicable regulations and " +
	"qualified, licensed evaluators decide."
