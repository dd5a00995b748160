package batch

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
)

// ErrBusy is the cause of the error returned when another sweepstat
// process is writing the same study folder.
var ErrBusy = errors.New("another sweepstat process is writing this study")

// folderLock is an exclusive claim on writing one study folder: a file
// beside it holding the owner's process id. A lock left by a process that
// no longer runs (killed outright) is taken over.
type folderLock struct{ path string }

func lockPathFor(final string) string {
	return filepath.Join(filepath.Dir(final), "."+filepath.Base(final)+".lock")
}

func acquireLock(final string) (*folderLock, error) {
	path := lockPathFor(final)
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return nil, fmt.Errorf("creating %s: %w", filepath.Dir(path), err)
	}
	for range 2 {
		f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
		if err == nil {
			_, werr := f.WriteString(strconv.Itoa(os.Getpid()) + "\n")
			cerr := f.Close()
			if werr != nil || cerr != nil {
				os.Remove(path)
				return nil, fmt.Errorf("writing %s: %w", path, errors.Join(werr, cerr))
			}
			return &folderLock{path: path}, nil
		}
		if !errors.Is(err, os.ErrExist) {
			return nil, fmt.Errorf("locking %s: %w", final, err)
		}
		data, _ := os.ReadFile(path)
		pid, perr := strconv.Atoi(strings.TrimSpace(string(data)))
		if perr == nil && pid > 0 && processAlive(pid) {
			return nil, fmt.Errorf("%s (process %d; its lock is %s): %w", final, pid, path, ErrBusy)
		}
		os.Remove(path) // stale: its owner is gone
	}
	return nil, fmt.Errorf("locking %s: could not take over a stale lock %s: %w", final, path, ErrBusy)
}

// processAlive reports whether a process with this id exists.
func processAlive(pid int) bool {
	if pid == os.Getpid() {
		return true
	}
	err := syscall.Kill(pid, 0)
	return err == nil || errors.Is(err, syscall.EPERM)
}

func (l *folderLock) release() {
	if l != nil {
		os.Remove(l.path)
	}
}
