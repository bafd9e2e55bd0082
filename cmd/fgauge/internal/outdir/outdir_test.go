package outdir

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fgauge/cmd/fgauge/internal/badinput"
)

func names(t *testing.T, dir string) string {
	t.Helper()
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var n []string
	for _, e := range ents {
		n = append(n, e.Name())
	}
	return strings.Join(n, " ")
}

func TestLockCommitAbort(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	a, err := New(out, false)
	if err != nil {
		t.Fatal(err)
	}
	// A second run into the same folder is refused at once, naming it.
	_, err = New(out, true)
	if be := (*badinput.Error)(nil); !errors.As(err, &be) || !strings.Contains(err.Error(), out) || !errors.Is(err, ErrBusy) {
		t.Errorf("second New: want a bad-input error naming %s, got %v", out, err)
	}
	if err := WriteFile(a, "samples.tsv", func(w io.Writer) error { return WriteTSV(w, []string{"sample"}, [][]string{{"goat_1"}}) }); err != nil {
		t.Fatal(err)
	}
	if err := a.Commit(); err != nil {
		t.Fatal(err)
	}
	if got := names(t, out); got != LockName+" samples.tsv" {
		t.Errorf("after Commit: %s", got)
	}
	a.Close()
	if got := names(t, out); got != "samples.tsv" {
		t.Errorf("after Close: %s", got)
	}
	// Results are not overwritten without force; the lock is not left behind.
	if _, err := New(out, false); err == nil || !strings.Contains(err.Error(), "already holds results") {
		t.Errorf("New without force: %v", err)
	}
	if got := names(t, out); got != "samples.tsv" {
		t.Errorf("after refused New: %s", got)
	}
	// A run killed with SIGKILL leaves an unlocked lock file and its
	// staging folder: the next run takes over both.
	os.WriteFile(filepath.Join(out, LockName), []byte("999999\n"), 0o644)
	os.Mkdir(filepath.Join(out, stagingPrefix+"1234"), 0o755)
	b, err := New(out, true)
	if err != nil {
		t.Fatalf("after a stale lock: %v", err)
	}
	if got := names(t, out); !strings.Contains(got, stagingPrefix) || strings.Contains(got, "1234") || !strings.Contains(got, LockName) {
		t.Errorf("stale staging folder not removed: %s", got)
	}
	b.Abort()
	if got := names(t, out); got != "samples.tsv" {
		t.Errorf("after Abort: %s", got)
	}
	// Abort removes a folder this run created.
	fresh := filepath.Join(t.TempDir(), "fresh")
	c, err := New(fresh, false)
	if err != nil {
		t.Fatal(err)
	}
	c.Abort()
	if _, err := os.Stat(fresh); !os.IsNotExist(err) {
		t.Errorf("Abort left %s: %v", fresh, err)
	}
}

// TestNewForKinds: a mating run and a scan never share an OUTDIR (both
// write a run.json of their own), not even with force; each refuses its
// own earlier results without force and replaces them with it.
func TestNewForKinds(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "samples.tsv"), []byte("sample\n"), 0o644)
	if _, err := NewFor(dir, true, MateNames); err == nil || !strings.Contains(err.Error(), "another fgauge command (samples.tsv)") {
		t.Errorf("mate into a scan folder: %v", err)
	}
	mdir := t.TempDir()
	os.WriteFile(filepath.Join(mdir, "pairs.tsv"), []byte("sire\n"), 0o644)
	if _, err := New(mdir, true); err == nil || !strings.Contains(err.Error(), "pairs.tsv") {
		t.Errorf("scan into a mating folder: %v", err)
	}
	if _, err := NewFor(mdir, false, MateNames); err == nil || !strings.Contains(err.Error(), "already holds results") {
		t.Errorf("mate again without force: %v", err)
	}
	d, err := NewFor(mdir, true, MateNames)
	if err != nil {
		t.Fatal(err)
	}
	if err := WriteFile(d, "allocation.tsv", func(w io.Writer) error { return WriteTSV(w, []string{"dam"}, nil) }); err != nil {
		t.Fatal(err)
	}
	if err := d.Commit(); err != nil {
		t.Fatal(err)
	}
	d.Close()
	// The earlier run's pairs.tsv, not written again, is gone.
	if got := names(t, mdir); got != "allocation.tsv" {
		t.Errorf("after a forced mating run: %s", got)
	}
}
