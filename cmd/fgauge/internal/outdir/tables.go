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

// WriteTables writes samples.tsv, runs.tsv and the population tables.
func WriteTables(out *Dir, totals *stats.Totals, rres *roh.Result, ped []string) error {
	header, rows := totals.SampleTable()
	if rres != nil {
		h2, r2 := rres.SampleTable()
		header = append(header, h2...)
		for i := range rows {
			rows[i] = append(rows[i], r2[i]...)
		}
	}
	if ped != nil {
		header = append(header, PedigreeColumn.Name)
		for i := range rows {
			rows[i] = append(rows[i], ped[i])
		}
	}
	if err := WriteFile(out, "samples.tsv", func(w io.Writer) error { return WriteTSV(w, header, rows) }); err != nil {
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
