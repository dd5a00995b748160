package batch

import (
	"context"
	"testing"

	"github.com/sweepstat/sweepstat/studies"
)

func TestRunDemoSmoke(t *testing.T) {
	st, err := studies.Demo()
	if err != nil {
		t.Fatal(err)
	}
	out := t.TempDir()
	info, err := Run(context.Background(), st, Options{Out: out, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("%+v", info)
}
