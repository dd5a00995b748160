package cli

import (
	"errors"
	"io/fs"
	"os"
)

// checkOutDir makes sure that dir, the parent output folder of a run,
// is a folder that exists (it is created if missing, as a run would) and
// takes new files, by creating and removing a hidden probe file in it.
// Anything else is bad input naming dir, found before a study runs: an
// --out that is a file or lies under one, a folder that cannot be created
// or one that is read-only. A full disk is not found here; the run fails
// on it, removing what it staged.
func checkOutDir(dir string) error {
	fi, err := os.Stat(dir)
	switch {
	case err == nil && !fi.IsDir():
		return badInput("--out %s is a file, not a folder", dir)
	case err != nil && !errors.Is(err, fs.ErrNotExist):
		return badInput("--out %s cannot be used as the output folder: %w", dir, err)
	case err != nil:
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return badInput("--out %s: cannot create the output folder: %w", dir, err)
		}
	}
	probe, err := os.CreateTemp(dir, ".sweepstat-probe-*")
	if err != nil {
		var pe *fs.PathError
		if errors.As(err, &pe) {
			err = pe.Err // the probe's random name says nothing
		}
		return badInput("--out %s: cannot write in the output folder: %w", dir, err)
	}
	name := probe.Name()
	probe.Close()
	if err := os.Remove(name); err != nil {
		return badInput("--out %s: cannot remove files in the output folder: %w", dir, err)
	}
	return nil
}
