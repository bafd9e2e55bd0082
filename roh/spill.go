package roh

import (
	"errors"
	"fmt"
	"io"
	"os"
	"sync"
)

// ErrTempDisk is wrapped by every failure to use the temporary folder
// (cannot create a file there, disk full, file gone): a cause the user can
// fix by choosing another folder (Config.TempDir), freeing space or
// raising Config.MemoryBudget. The command maps it to exit status 2.
var ErrTempDisk = errors.New("temporary folder unusable")

// TempDiskError reports a failed temporary-file operation.
type TempDiskError struct {
	Dir string // the folder (Config.TempDir, or the system default)
	Op  string // "create", "write" or "read"
	Err error
}

func (e *TempDiskError) Error() string {
	return fmt.Sprintf("roh: %s: %s of a temporary file in %s failed: %v (choose another folder, free space, or raise the memory budget)",
		ErrTempDisk, e.Op, e.Dir, e.Err)
}

func (e *TempDiskError) Unwrap() []error { return []error{ErrTempDisk, e.Err} }

// spillFile holds the windows of one chromosome that do not fit the memory
// budget, written sequentially and read back by offset. The file is
// removed from its folder as soon as it is created, so nothing is left
// behind whatever way the process ends (interrupt, crash, kill); its
// space is freed when it is closed. Where an open file cannot be removed,
// it is removed on close instead.
type spillFile struct {
	dir  string
	f    *os.File
	name string // still to remove on close, or ""
	end  int64
	mu   sync.Mutex
}

// tempDir is the folder spill files go to.
func (c *Config) tempDir() string {
	if c.TempDir != "" {
		return c.TempDir
	}
	return os.TempDir()
}

func openSpill(dir string) (*spillFile, error) {
	f, err := os.CreateTemp(dir, "fgauge-roh-*.tmp")
	if err != nil {
		return nil, &TempDiskError{Dir: dir, Op: "create", Err: err}
	}
	s := &spillFile{dir: dir, f: f}
	if err := os.Remove(f.Name()); err != nil {
		s.name = f.Name()
	}
	return s, nil
}

// append writes the sections one after the other at the end of the file
// and returns the offset of the first.
func (s *spillFile) append(secs [][]byte) (int64, error) {
	s.mu.Lock()
	off := s.end
	for _, b := range secs {
		s.end += int64(len(b))
	}
	s.mu.Unlock()
	if err := s.writeAt(secs, off); err != nil {
		return 0, err
	}
	return off, nil
}

func (s *spillFile) writeAt(secs [][]byte, off int64) error {
	for _, b := range secs {
		if _, err := s.f.WriteAt(b, off); err != nil {
			return &TempDiskError{Dir: s.dir, Op: "write", Err: err}
		}
		off += int64(len(b))
	}
	return nil
}

func (s *spillFile) readAt(secs [][]byte, off int64) error {
	for _, b := range secs {
		if _, err := s.f.ReadAt(b, off); err != nil {
			if err == io.EOF {
				err = io.ErrUnexpectedEOF
			}
			return &TempDiskError{Dir: s.dir, Op: "read", Err: err}
		}
		off += int64(len(b))
	}
	return nil
}

// close releases the file (and its disk space). Safe to call twice.
func (s *spillFile) close() {
	if s == nil || s.f == nil {
		return
	}
	s.f.Close()
	if s.name != "" {
		os.Remove(s.name)
	}
	s.f = nil
}
