package roh

import (
	"errors"
	"os"
	"path/filepath"
	"syscall"
	"testing"
)

// A write that fails for lack of space (here /dev/full, which answers
// every write with ENOSPC, standing in for a full temporary disk) is a
// *TempDiskError wrapping ErrTempDisk and the cause, naming the folder.
func TestSpillDiskFull(t *testing.T) {
	f, err := os.OpenFile("/dev/full", os.O_RDWR, 0)
	if err != nil {
		t.Skipf("no /dev/full here: %v", err)
	}
	s := &spillFile{dir: "/some/tmp", f: f}
	defer s.close()
	_, err = s.append([][]byte{make([]byte, 4096)})
	var te *TempDiskError
	if !errors.As(err, &te) || !errors.Is(err, ErrTempDisk) || !errors.Is(err, syscall.ENOSPC) || te.Dir != "/some/tmp" || te.Op != "write" {
		t.Fatalf("write to a full disk: %v", err)
	}
}

// CheckTempDir refuses a missing folder and a file, and accepts a
// writable folder, leaving it empty.
func TestCheckTempDir(t *testing.T) {
	dir := t.TempDir()
	if err := CheckTempDir(dir); err != nil {
		t.Fatalf("writable folder: %v", err)
	}
	if left, _ := os.ReadDir(dir); len(left) != 0 {
		t.Errorf("left %v", left)
	}
	if err := CheckTempDir(filepath.Join(dir, "missing")); !errors.Is(err, ErrTempDisk) || !errors.Is(err, os.ErrNotExist) {
		t.Errorf("missing folder: %v", err)
	}
	file := filepath.Join(dir, "file")
	os.WriteFile(file, nil, 0o644)
	if err := CheckTempDir(file); !errors.Is(err, ErrTempDisk) {
		t.Errorf("a file: %v", err)
	}
}
