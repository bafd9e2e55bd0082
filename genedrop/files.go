package genedrop

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// WriteFiles writes the VCF (unless the run has no sites), the truth
// tables and the pedigree into dir and returns the paths written.
func WriteFiles(dir string, res *Result) ([]string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}
	var paths []string
	if !res.Config.NoSites {
		p := filepath.Join(dir, "simulated.vcf.gz")
		if err := WriteVCFBGZF(p, res); err != nil {
			return nil, fmt.Errorf("writing %s: %w", p, err)
		}
		paths = append(paths, p)
		if res.Config.Depth > 0 {
			p := filepath.Join(dir, "truth_genotypes.vcf.gz")
			if err := WriteTruthVCFBGZF(p, res); err != nil {
				return nil, fmt.Errorf("writing %s: %w", p, err)
			}
			paths = append(paths, p)
		}
	}
	for _, t := range []struct {
		name string
		fn   func(io.Writer, *Result) error
	}{
		{"truth_samples.tsv", WriteSamplesTruth},
		{"truth_segments.tsv", WriteSegmentsTruth},
		{"pedigree.tsv", WritePedigree},
	} {
		p := filepath.Join(dir, t.name)
		if err := writeFile(p, func(w io.Writer) error { return t.fn(w, res) }); err != nil {
			return nil, fmt.Errorf("writing %s: %w", p, err)
		}
		paths = append(paths, p)
	}
	return paths, nil
}

// WritePairFiles writes truth_pairs.tsv and, with candidates, the
// closed herds' candidate lists, and returns the paths written.
func WritePairFiles(dir string, res *Result, pairs [][2]int, candidates bool) ([]string, error) {
	truth, err := res.Pairs(pairs)
	if err != nil {
		return nil, err
	}
	p := filepath.Join(dir, "truth_pairs.tsv")
	if err := writeFile(p, func(w io.Writer) error { return WritePairsTruth(w, res, truth) }); err != nil {
		return nil, fmt.Errorf("writing %s: %w", p, err)
	}
	paths := []string{p}
	if !candidates {
		return paths, nil
	}
	var sires, dams []int
	for rep := 1; rep <= res.Config.Replicates; rep++ {
		s, d := res.HerdCandidates(rep)
		sires, dams = append(sires, s...), append(dams, d...)
	}
	for _, l := range []struct {
		name string
		ids  []int
	}{{"candidate_sires.txt", sires}, {"candidate_dams.txt", dams}} {
		p := filepath.Join(dir, l.name)
		err := writeFile(p, func(w io.Writer) error {
			for _, i := range l.ids {
				if _, err := fmt.Fprintln(w, res.Samples[i].ID); err != nil {
					return err
				}
			}
			return nil
		})
		if err != nil {
			return nil, fmt.Errorf("writing %s: %w", p, err)
		}
		paths = append(paths, p)
	}
	return paths, nil
}

// writeFile runs fn on a buffered new file at path.
func writeFile(path string, fn func(io.Writer) error) (err error) {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := f.Close(); err == nil {
			err = cerr
		}
	}()
	bw := bufio.NewWriter(f)
	if err := fn(bw); err != nil {
		return err
	}
	return bw.Flush()
}
