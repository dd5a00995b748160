package cli

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/sweepstat/sweepstat/batch"
	"github.com/sweepstat/sweepstat/studies"
)

// studyFiles expands the arguments of `run` and `check`: a file stands
// for itself, a folder for every *.yaml and *.yml file directly in it, in
// sorted order. A folder without study files is bad input. A path that
// cannot be read is left for studies.Load to report.
func studyFiles(args []string) ([]string, error) {
	var files []string
	for _, a := range args {
		fi, err := os.Stat(a)
		if err != nil || !fi.IsDir() {
			files = append(files, a)
			continue
		}
		ents, err := os.ReadDir(a)
		if err != nil {
			return nil, badInput("reading folder %s: %w", a, err)
		}
		var in []string
		for _, e := range ents {
			ext := strings.ToLower(filepath.Ext(e.Name()))
			if e.Type().IsRegular() || e.Type()&os.ModeSymlink != 0 {
				if ext == ".yaml" || ext == ".yml" {
					in = append(in, filepath.Join(a, e.Name()))
				}
			}
		}
		if len(in) == 0 {
			return nil, badInput("no study files (*.yaml, *.yml) in folder %s", a)
		}
		slices.Sort(in)
		files = append(files, in...)
	}
	return files, nil
}

// loadStudies loads and validates every study named by args (see
// studyFiles), or the embedded demo study when args is empty. It returns
// all of them, or a *StudyErrors holding every file's errors. Two studies
// with the same name are bad input: they would write into one folder.
func loadStudies(args []string) ([]*studies.Study, error) {
	if len(args) == 0 {
		st, err := studies.Demo()
		if err == nil {
			_, err = batch.NewDesign(st)
		}
		if err != nil {
			return nil, &StudyErrors{Lists: []error{err}, Files: 1}
		}
		return []*studies.Study{st}, nil
	}
	files, err := studyFiles(args)
	if err != nil {
		return nil, err
	}
	var (
		sts  []*studies.Study
		bad  []error
		seen = map[string]string{} // study name → file
	)
	for _, file := range files {
		st, err := loadStudy(file)
		if err != nil {
			bad = append(bad, err)
			continue
		}
		if prev, dup := seen[st.Name]; dup {
			bad = append(bad, fmt.Errorf("%s: name: %q is also the name of %s (each study writes into a folder of its name)", file, st.Name, prev))
			continue
		}
		seen[st.Name] = file
		sts = append(sts, st)
	}
	if len(bad) > 0 {
		return nil, &StudyErrors{Lists: bad, Files: len(files)}
	}
	return sts, nil
}

// loadStudy loads and validates the study file at path, then builds its
// sampling design, so that what only the sampler finds (a correlation
// matrix that is not positive definite) is a study error before anything
// runs, for check as for run. The design is cheap to build (no per-case
// storage) and is built again by the run.
func loadStudy(path string) (*studies.Study, error) {
	st, err := studies.Load(path)
	if err != nil {
		return nil, err
	}
	if _, err := batch.NewDesign(st); err != nil {
		return nil, err
	}
	return st, nil
}
