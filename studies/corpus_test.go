package studies

import (
	"bufio"
	"bytes"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// corpusDir holds bad study files, each with a "# want:" header (see its
// README.md).
const corpusDir = "../testdata/bad"

// corpusHeader reads the "# want:" and "# at:" lines at the top of a
// corpus file.
func corpusHeader(data []byte) (want string, at Pos, hasAt bool, err error) {
	sc := bufio.NewScanner(bytes.NewReader(data))
	for sc.Scan() {
		line := sc.Text()
		if !strings.HasPrefix(line, "#") {
			break
		}
		key, val, ok := strings.Cut(strings.TrimSpace(strings.TrimPrefix(line, "#")), ":")
		if !ok {
			continue
		}
		val = strings.TrimSpace(val)
		switch strings.TrimSpace(key) {
		case "want":
			want = val
		case "at":
			l, c, _ := strings.Cut(val, ":")
			if at.Line, err = strconv.Atoi(l); err != nil {
				return
			}
			if c != "" {
				if at.Column, err = strconv.Atoi(c); err != nil {
					return
				}
			}
			hasAt = true
		}
	}
	return
}

func TestCorpus(t *testing.T) {
	t.Parallel()
	files, err := filepath.Glob(filepath.Join(corpusDir, "*.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	if len(files) < 10 {
		t.Fatalf("only %d corpus files", len(files))
	}
	for _, f := range files {
		t.Run(filepath.Base(f), func(t *testing.T) {
			t.Parallel()
			data, err := os.ReadFile(f)
			if err != nil {
				t.Fatal(err)
			}
			want, at, hasAt, err := corpusHeader(data)
			if err != nil || want == "" {
				t.Fatalf("bad header (want %q, err %v): the first lines must be '# want: fragment' and optionally '# at: line:col'", want, err)
			}
			_, err = Load(f)
			if err == nil {
				t.Fatalf("Load succeeded, want an error containing %q", want)
			}
			list, ok := err.(ErrorList)
			if !ok {
				t.Fatalf("Load returned %T, want ErrorList", err)
			}
			for _, e := range list {
				if !strings.Contains(e.Error(), want) {
					continue
				}
				if !strings.HasPrefix(e.Error(), f+":") {
					t.Errorf("%q does not start with the file name", e)
				}
				if hasAt && (e.Line != at.Line || at.Column != 0 && e.Column != at.Column) {
					t.Errorf("%q is at %v, want %v", e, e.Pos(), at)
				}
				return
			}
			t.Errorf("no error contains %q; got\n%s", want, listText(err))
		})
	}
}
