package mate

import (
	"fmt"
	"os"
	"path/filepath"
	"sort"
)

// outputNames are the files a mating run writes into OUTDIR; an OUTDIR
// holding any of them is not overwritten without Force.
var outputNames = []string{"pairs.tsv", "allocation.tsv", "run.json", "mate.html"}

// stagedDir collects the outputs in a hidden temporary folder inside
// OUTDIR and moves them into place only when the whole run has succeeded,
// so a failed or interrupted run leaves no half-written result.
//
// Copied from cmd/fgauge/outdir.go (package main, not importable while
// the output-folder package is being extracted); to be replaced by the
// shared package when it lands.
type stagedDir struct {
	final   string
	tmp     string
	created bool
}

func newStagedDir(dir string, force bool) (*stagedDir, error) {
	if dir == "" {
		return nil, inputErrorf("", 0, "an output folder is required (-o OUTDIR)")
	}
	s := &stagedDir{final: dir}
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
		return nil, inputErrorf("", 0, "%s exists and is not a folder", dir)
	default:
		if !force {
			for _, n := range outputNames {
				if _, err := os.Stat(filepath.Join(dir, n)); err == nil {
					return nil, inputErrorf("", 0, "%s already holds results (%s); choose another folder or add --force to overwrite", dir, n)
				}
			}
		}
	}
	tmp, err := os.MkdirTemp(dir, ".fgauge-tmp-")
	if err != nil {
		return nil, fmt.Errorf("creating temporary folder in %s: %w", dir, err)
	}
	s.tmp = tmp
	return s, nil
}

// Create opens a staged output file by its final base name.
func (s *stagedDir) Create(name string) (*os.File, error) {
	return os.Create(filepath.Join(s.tmp, name))
}

// Commit moves every staged file into OUTDIR, run.json last, removes
// earlier results this run did not write again, and removes the
// temporary folder.
func (s *stagedDir) Commit() error {
	entries, err := os.ReadDir(s.tmp)
	if err != nil {
		return err
	}
	names := make([]string, 0, len(entries))
	made := map[string]bool{}
	for _, e := range entries {
		names = append(names, e.Name())
		made[e.Name()] = true
	}
	sort.Slice(names, func(i, j int) bool {
		if (names[i] == "run.json") != (names[j] == "run.json") {
			return names[j] == "run.json"
		}
		return names[i] < names[j]
	})
	for _, n := range outputNames {
		if !made[n] {
			if err := os.RemoveAll(filepath.Join(s.final, n)); err != nil {
				return fmt.Errorf("removing the earlier run's %s: %w", n, err)
			}
		}
	}
	for _, n := range names {
		if err := os.Rename(filepath.Join(s.tmp, n), filepath.Join(s.final, n)); err != nil {
			return fmt.Errorf("moving %s into place: %w", n, err)
		}
	}
	return os.RemoveAll(s.tmp)
}

// Abort removes the temporary folder, and OUTDIR when this run created it
// and it is empty.
func (s *stagedDir) Abort() {
	if s == nil {
		return
	}
	os.RemoveAll(s.tmp)
	if s.created {
		os.Remove(s.final)
	}
}
