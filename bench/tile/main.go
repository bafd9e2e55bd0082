// Command tile writes a large benchmark VCF made from the genotypes of a
// small real one, so that bench/run times the scan on real-like calls
// (unphased, missing and half-missing calls, the cohort's own frequency
// spectrum and records the site policy drops) instead of only the
// synthetic ones of bench/gen.
//
// The source VCF text comes on standard input (bench/run decompresses
// testdata/cohort189.vcf.gz, 189 samples and 115 records). The output has
// -samples columns in groups of -group: each group is a random draw of
// that many source individuals, so a sample is always one source
// individual. The -sites records take REF, ALT, QUAL and FILTER from the
// source rows in turn; every group reads its genotypes from the source
// rows in the same order but with its own offset, redrawn every time the
// rows wrap around, so that site counts (sums over the groups) vary from
// site to site at any cohort size and the text does not repeat within the
// compressor's window. Only the GT text (the part before the first ':')
// is kept, as in an array cohort. The data are for timing only.
package main

import (
	"bufio"
	"bytes"
	"flag"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"strconv"
)

type row struct {
	ref, alt, qual, filter []byte
	gt                     [][]byte
}

func main() {
	samples := flag.Int("samples", 1000, "number of samples")
	sites := flag.Int("sites", 100000, "number of records")
	chroms := flag.Int("chroms", 2, "number of chromosomes the records are spread over")
	spacing := flag.Int("spacing", 1000, "bp between records")
	group := flag.Int("group", 20, "samples per group of source individuals sharing a row offset")
	seed := flag.Uint64("seed", 1, "random seed")
	flag.Parse()
	rows, nSrc, err := readSource(os.Stdin)
	if err != nil {
		fmt.Fprintln(os.Stderr, "tile:", err)
		os.Exit(2)
	}
	rng := rand.New(rand.NewPCG(*seed, 11))
	g := min(max(*group, 1), nSrc)
	nGroups := (*samples + g - 1) / g
	perm := make([][]int, nGroups)
	for c := range perm {
		perm[c] = rng.Perm(nSrc)[:g]
	}
	off := make([]int, nGroups)

	w := bufio.NewWriterSize(os.Stdout, 1<<20)
	defer w.Flush()
	perChrom := (*sites + *chroms - 1) / *chroms
	fmt.Fprintln(w, "##fileformat=VCFv4.2")
	for c := 1; c <= *chroms; c++ {
		fmt.Fprintf(w, "##contig=<ID=%d,length=%d>\n", c, perChrom**spacing+*spacing)
	}
	fmt.Fprintln(w, `##FILTER=<ID=PASS,Description="All filters passed">`)
	fmt.Fprintln(w, `##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">`)
	fmt.Fprint(w, "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT")
	for s := 0; s < *samples; s++ {
		fmt.Fprintf(w, "\tDOE%05d", s)
	}
	fmt.Fprintln(w)
	line := make([]byte, 0, 5**samples+64)
	for i := 0; i < *sites; i++ {
		r := i % len(rows)
		if r == 0 {
			for c := range off {
				off[c] = rng.IntN(len(rows))
			}
		}
		src := &rows[r]
		line = line[:0]
		line = strconv.AppendInt(line, int64(i/perChrom+1), 10)
		line = append(line, '\t')
		line = strconv.AppendInt(line, int64((i%perChrom+1)**spacing), 10)
		line = append(line, "\t.\t"...)
		line = append(line, src.ref...)
		line = append(line, '\t')
		line = append(line, src.alt...)
		line = append(line, '\t')
		line = append(line, src.qual...)
		line = append(line, '\t')
		line = append(line, src.filter...)
		line = append(line, "\t.\tGT"...)
		for s := 0; s < *samples; s++ {
			c := s / g
			gt := rows[(r+off[c])%len(rows)].gt[perm[c][s%g]]
			line = append(line, '\t')
			line = append(line, gt...)
		}
		line = append(line, '\n')
		if _, err := w.Write(line); err != nil {
			fmt.Fprintln(os.Stderr, "tile:", err)
			os.Exit(1)
		}
	}
}

// readSource reads the data lines of a VCF: fixed fields and the GT text
// of every sample. It returns the rows and the number of samples.
func readSource(in io.Reader) ([]row, int, error) {
	sc := bufio.NewScanner(in)
	sc.Buffer(nil, 64<<20)
	var rows []row
	nSrc := -1
	lineNo := 0
	for sc.Scan() {
		lineNo++
		l := sc.Bytes()
		if len(l) == 0 || l[0] == '#' {
			continue
		}
		f := bytes.Split(l, []byte{'\t'})
		if len(f) < 10 {
			return nil, 0, fmt.Errorf("line %d: %d fields, need at least 10 (a VCF with samples)", lineNo, len(f))
		}
		if nSrc < 0 {
			nSrc = len(f) - 9
		} else if len(f)-9 != nSrc {
			return nil, 0, fmt.Errorf("line %d: %d samples, earlier lines have %d", lineNo, len(f)-9, nSrc)
		}
		rw := row{ref: clone(f[3]), alt: clone(f[4]), qual: clone(f[5]), filter: clone(f[6])}
		for _, g := range f[9:] {
			if k := bytes.IndexByte(g, ':'); k >= 0 {
				g = g[:k]
			}
			rw.gt = append(rw.gt, clone(g))
		}
		rows = append(rows, rw)
	}
	if err := sc.Err(); err != nil {
		return nil, 0, err
	}
	if len(rows) == 0 {
		return nil, 0, fmt.Errorf("no data lines on standard input")
	}
	return rows, nSrc, nil
}

func clone(b []byte) []byte { return append([]byte(nil), b...) }
