package outdir

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"fgauge/cmd/fgauge/internal/badinput"
)

// LockName is the file inside OUTDIR that a run holds locked (flock) while
// it writes there. The kernel releases the lock when the process ends, so
// a run killed with SIGKILL leaves at most a stale, unlocked file that the
// next run simply takes over.
const LockName = ".fgauge-lock"

// ErrBusy is wrapped by the error of a run refused because another run
// holds the same output folder.
var ErrBusy = errors.New("another fgauge run is writing into this output folder")

// folderLock is a held lock on OUTDIR/.fgauge-lock.
type folderLock struct {
	path string
	f    *os.File
}

// lockFolder takes the lock of dir without waiting. A second run into the
// same folder is refused at once: waiting would hide that two jobs were
// given one OUTDIR, which is almost always a mistake in a batch script.
func lockFolder(dir string) (*folderLock, error) {
	path := filepath.Join(dir, LockName)
	for try := 0; try < 5; try++ {
		f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
		if err != nil {
			return nil, fmt.Errorf("locking output folder %s: %w", dir, err)
		}
		held, err := tryLock(f)
		if err != nil {
			f.Close()
			return nil, fmt.Errorf("locking output folder %s: %w", dir, err)
		}
		if !held {
			who := ""
			if b, err := os.ReadFile(path); err == nil {
				if pid, err := strconv.Atoi(strings.TrimSpace(string(b))); err == nil && pid > 0 {
					who = fmt.Sprintf(" (process %d)", pid)
				}
			}
			f.Close()
			return nil, &badinput.Error{Msg: fmt.Sprintf("%s: %v%s; wait for it to finish or choose another folder", dir, ErrBusy, who), Err: ErrBusy}
		}
		// The holder before us may have removed the file between our open
		// and our lock; then we hold a lock on a file nobody else will
		// open, and must take the one now at path.
		if same, err := samePath(f, path); err != nil || !same {
			f.Close()
			continue
		}
		f.Truncate(0)
		f.WriteString(strconv.Itoa(os.Getpid()) + "\n")
		return &folderLock{path: path, f: f}, nil
	}
	return nil, fmt.Errorf("locking output folder %s: the lock file keeps changing", dir)
}

// release removes the lock file, then drops the lock.
func (l *folderLock) release() {
	if l == nil || l.f == nil {
		return
	}
	os.Remove(l.path)
	l.f.Close() // closing the last descriptor drops the flock
	l.f = nil
}

// samePath reports whether f is the file now at path.
func samePath(f *os.File, path string) (bool, error) {
	a, err := f.Stat()
	if err != nil {
		return false, err
	}
	b, err := os.Stat(path)
	if err != nil {
		return false, nil
	}
	return os.SameFile(a, b), nil
}
