package outdir

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"strings"

	"fgauge/roh"
	"fgauge/stats"
)

// sampleRowsPart is how many samples' rows WriteTables formats at a time.
const sampleRowsPart = 4096

// WriteTables writes samples.tsv, runs.tsv and the population tables.
func WriteTables(out *Dir, totals *stats.Totals, rres *roh.Result, ped []string) error {
	// The table is formatted a part of the cohort at a time, so that a
	// large cohort's rows (about 1 kB of text a sample) are never all held.
	header, part := totals.SampleRows()
	var part2 func(lo, hi int) [][]string
	if rres != nil {
		var h2 []string
		h2, part2 = rres.SampleRows()
		header = append(header, h2...)
	}
	if ped != nil {
		header = append(header, PedigreeColumn.Name)
	}
	n := len(totals.PerSample)
	err := WriteFile(out, "samples.tsv", func(w io.Writer) error {
		bw := bufio.NewWriter(w)
		bw.WriteString(strings.Join(header, "\t"))
		bw.WriteByte('\n')
		for lo := 0; lo < n; lo += sampleRowsPart {
			hi := min(lo+sampleRowsPart, n)
			rows := part(lo, hi)
			var r2 [][]string
			if part2 != nil {
				r2 = part2(lo, hi)
			}
			for i, r := range rows {
				bw.WriteString(strings.Join(r, "\t"))
				if r2 != nil {
					bw.WriteByte('\t')
					bw.WriteString(strings.Join(r2[i], "\t"))
				}
				if ped != nil {
					bw.WriteByte('\t')
					bw.WriteString(ped[lo+i])
				}
				bw.WriteByte('\n')
			}
		}
		return bw.Flush()
	})
	if err != nil {
		return err
	}
	if rres != nil {
		if err := WriteFile(out, "runs.tsv", rres.WriteRuns); err != nil {
			return err
		}
	}
	if totals.HasPopulations() {
		if err := WriteFile(out, "populations.tsv", totals.WritePopulations); err != nil {
			return err
		}
		if err := WriteFile(out, "populations_pairwise.tsv", totals.WritePairwise); err != nil {
			return err
		}
	}
	return nil
}

// WriteTSV writes a header line and rows, tab-separated.
func WriteTSV(w io.Writer, header []string, rows [][]string) error {
	bw := bufio.NewWriter(w)
	bw.WriteString(strings.Join(header, "\t"))
	bw.WriteByte('\n')
	for _, r := range rows {
		bw.WriteString(strings.Join(r, "\t"))
		bw.WriteByte('\n')
	}
	return bw.Flush()
}

// WriteFile creates a staged file and fills it with fill.
func WriteFile(out *Dir, name string, fill func(io.Writer) error) error {
	f, err := out.Create(name)
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(f, 1<<16)
	if err := fill(bw); err != nil {
		f.Close()
		return fmt.Errorf("writing %s: %w", name, err)
	}
	if err := bw.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// WriteJSON writes v as indented JSON.
func WriteJSON(out *Dir, name string, v any) error {
	return WriteFile(out, name, func(w io.Writer) error {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(v)
	})
}
