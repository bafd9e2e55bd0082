// Package outdir is the output folder of a scan, merge or mating run: files are
// written into a hidden staging folder inside OUTDIR and moved into place
// by Commit only when the whole run succeeded, so a failed or interrupted
// run leaves no half-written result. It also owns the names of the files
// a run may write.
package outdir

import (
	"fmt"
	"os"
	"path/filepath"
	"sort"

	"fgauge/cmd/fgauge/internal/badinput"
)

// Names are the files a scan or merge may write into OUTDIR; an
// OUTDIR holding any of them is not overwritten without --force.
var Names = []string{
	"sites.tsv.gz", "sites.tsv.gz.tbi", "sites_by_population.tsv.gz", "samples.tsv", "runs.tsv",
	"populations.tsv", "populations_pairwise.tsv", "run.json", "report.html", "samples",
}

// MateNames are the files `fgauge mate` writes into its OUTDIR (see
// NewFor). run.json is shared by name with Names, but the two kinds of
// run.json differ, so a folder holding one kind's results is never used
// for the other's, not even with --force.
var MateNames = []string{"pairs.tsv", "allocation.tsv", "run.json", "mate.html"}

// kinds are the name lists of every kind of run.
var kinds = [][]string{Names, MateNames}

// stagingPrefix starts the name of the hidden staging folder in OUTDIR.
const stagingPrefix = ".fgauge-tmp-"

// Dir collects the outputs of one run in a hidden temporary folder
// inside OUTDIR and moves them into place only when the whole run has
// succeeded, so a failed or interrupted run leaves no half-written result.
type Dir struct {
	final   string // OUTDIR
	tmp     string // OUTDIR/.fgauge-tmp-*
	created bool   // OUTDIR did not exist before the run
	files   []string
	names   []string // the files this kind of run may write
	lock    *folderLock
}

// New prepares OUTDIR and locks it for this run. It refuses an OUTDIR that
// already holds results unless force is set, and an OUTDIR that another
// run holds (an error wrapping ErrBusy and naming the folder). Call Close
// (or Abort) when done.
func New(dir string, force bool) (*Dir, error) { return NewFor(dir, force, Names) }

// NewFor is New for a run that writes the files names (Names for a scan
// or merge, MateNames for a mating run). Besides New's checks it refuses,
// even with force, an OUTDIR holding results of another kind of run.
func NewFor(dir string, force bool, names []string) (*Dir, error) {
	if dir == "" {
		return nil, badinput.Errorf("an output folder is required (-o OUTDIR)")
	}
	s := &Dir{final: dir, names: names}
	st, err := os.Stat(dir)
	switch {
	case os.IsNotExist(err):
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return nil, fmt.Errorf("creating output folder: %w", err)
		}
		s.created = true
	case err != nil:
		return nil, fmt.Errorf("output folder: %w", err)
	case !st.IsDir():
		return nil, badinput.Errorf("%s exists and is not a folder", dir)
	}
	if s.lock, err = lockFolder(dir); err != nil {
		s.removeCreated()
		return nil, err
	}
	// Staging folders of runs killed before they could clean up: nobody
	// else can be using them while we hold the lock.
	if old, _ := filepath.Glob(filepath.Join(dir, stagingPrefix+"*")); len(old) > 0 {
		for _, p := range old {
			os.RemoveAll(p)
		}
	}
	if !s.created {
		if n := foreign(dir, names); n != "" {
			s.Close()
			return nil, badinput.Errorf("%s holds the results of another fgauge command (%s); choose another folder", dir, n)
		}
	}
	if !s.created && !force {
		for _, n := range names {
			if _, err := os.Stat(filepath.Join(dir, n)); err == nil {
				s.Close()
				return nil, badinput.Errorf("%s already holds results (%s); choose another folder or add --force to overwrite", dir, n)
			}
		}
	}
	tmp, err := os.MkdirTemp(dir, stagingPrefix)
	if err != nil {
		s.Close()
		s.removeCreated()
		return nil, fmt.Errorf("creating temporary folder in %s: %w", dir, err)
	}
	s.tmp = tmp
	return s, nil
}

// Create opens a staged output file by its final base name.
func (s *Dir) Create(name string) (*os.File, error) {
	s.files = append(s.files, name)
	return os.Create(filepath.Join(s.tmp, name))
}

// Path is where a staged file is written before Commit.
func (s *Dir) Path(name string) string { return filepath.Join(s.tmp, name) }

// Commit moves every staged file into OUTDIR and removes the temporary
// folder. Files are moved in a fixed order, run.json last, so a reader that
// waits for run.json sees a complete set.
func (s *Dir) Commit() error {
	entries, err := os.ReadDir(s.tmp)
	if err != nil {
		return err
	}
	names := make([]string, 0, len(entries))
	for _, e := range entries {
		names = append(names, e.Name())
	}
	sort.Slice(names, func(i, j int) bool {
		if (names[i] == "run.json") != (names[j] == "run.json") {
			return names[j] == "run.json"
		}
		return names[i] < names[j]
	})
	// Results of an earlier run that this run did not write again would
	// mix two runs in one folder (only reachable with --force).
	made := map[string]bool{}
	for _, n := range names {
		made[n] = true
	}
	for _, n := range s.names {
		if !made[n] {
			if err := os.RemoveAll(filepath.Join(s.final, n)); err != nil {
				return fmt.Errorf("removing the earlier run's %s: %w", n, err)
			}
		}
	}
	for _, n := range names {
		dst := filepath.Join(s.final, n)
		if st, err := os.Stat(dst); err == nil && st.IsDir() {
			if err := os.RemoveAll(dst); err != nil {
				return err
			}
		}
		if err := os.Rename(filepath.Join(s.tmp, n), dst); err != nil {
			return fmt.Errorf("moving %s into place: %w", n, err)
		}
	}
	return os.RemoveAll(s.tmp)
}

// Abort removes the temporary folder, releases the lock, and removes
// OUTDIR itself when this run created it and it is empty.
func (s *Dir) Abort() {
	if s == nil {
		return
	}
	if s.tmp != "" {
		os.RemoveAll(s.tmp)
	}
	s.Close()
	s.removeCreated()
}

// Close releases the folder's lock. Files written after Commit (a report)
// should be written before Close, so that no other run mixes in.
func (s *Dir) Close() {
	if s != nil {
		s.lock.release()
	}
}

// Final is OUTDIR.
func (s *Dir) Final() string { return s.final }

// foreign returns a file in dir that another kind of run writes and a run
// writing names does not, "" when there is none.
func foreign(dir string, names []string) string {
	own := map[string]bool{}
	for _, n := range names {
		own[n] = true
	}
	for _, k := range kinds {
		for _, n := range k {
			if own[n] {
				continue
			}
			if _, err := os.Stat(filepath.Join(dir, n)); err == nil {
				return n
			}
		}
	}
	return ""
}

func (s *Dir) removeCreated() {
	if s.created {
		os.Remove(s.final) // only succeeds when empty
	}
}
