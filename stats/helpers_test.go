package stats

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"fgauge/vcfscan"
)

// fixture is a small multi-sample data set held as records and calls.
type fixture struct {
	samples []string
	chroms  []string
	recs    []vcfscan.Record
	calls   [][]vcfscan.Geno
}

// readVCFFixture is a deliberately simple VCF reader for tests (not the
// engine's): it keeps records with one ALT where REF and ALT are single
// ACGT bases, whatever FILTER, and codes a GT with any missing allele as
// missing, the policy of shared/reference tools/site_sample_counts.py.
func readVCFFixture(t testing.TB, path string) *fixture {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var r io.Reader = f
	if strings.HasSuffix(path, ".gz") {
		zr, err := gzip.NewReader(f)
		if err != nil {
			t.Fatal(err)
		}
		r = zr
	}
	fx := &fixture{}
	chromID := map[string]int{}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 1<<20), 64<<20)
	acgt := func(s string) bool { return len(s) == 1 && strings.Contains("ACGT", s) }
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "##") {
			continue
		}
		fl := strings.Split(line, "\t")
		if strings.HasPrefix(line, "#CHROM") {
			fx.samples = fl[9:]
			continue
		}
		if !acgt(fl[3]) || !acgt(fl[4]) {
			continue
		}
		id, ok := chromID[fl[0]]
		if !ok {
			id = len(fx.chroms)
			chromID[fl[0]] = id
			fx.chroms = append(fx.chroms, fl[0])
		}
		pos, _ := strconv.ParseInt(fl[1], 10, 64)
		fx.recs = append(fx.recs, vcfscan.Record{ChromID: id, Pos: pos, Ref: []byte(fl[3]), Alt: []byte(fl[4]), InfoValue: math.NaN()})
		gs := make([]vcfscan.Geno, len(fx.samples))
		for i, s := range fl[9:] {
			gt, _, _ := strings.Cut(s, ":")
			gs[i] = codeGT(gt)
		}
		fx.calls = append(fx.calls, gs)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return fx
}

func codeGT(gt string) vcfscan.Geno {
	al := strings.FieldsFunc(gt, func(r rune) bool { return r == '/' || r == '|' })
	if len(al) == 1 {
		switch al[0] {
		case "0":
			return vcfscan.HaploidRef
		case "1":
			return vcfscan.HaploidAlt
		}
		return vcfscan.Missing
	}
	if len(al) != 2 || al[0] == "." || al[1] == "." {
		return vcfscan.Missing
	}
	a, _ := strconv.Atoi(al[0])
	b, _ := strconv.Atoi(al[1])
	return vcfscan.Geno(a + b)
}

// batches cuts records [from,to) into batches of size k.
func (fx *fixture) batches(from, to, k int) []*vcfscan.Batch {
	var out []*vcfscan.Batch
	for i := from; i < to; i += k {
		j := min(i+k, to)
		b := &vcfscan.Batch{Seq: int64(len(out)), NSamples: len(fx.samples), Records: fx.recs[i:j]}
		for r := i; r < j; r++ {
			b.GT = append(b.GT, fx.calls[r]...)
		}
		out = append(out, b)
	}
	return out
}

func (fx *fixture) contig(id int) string { return fx.chroms[id] }

// run processes records [from,to) with one worker and returns its totals
// and the site rows.
func (fx *fixture) run(t testing.TB, cfg *Config, from, to, k int) (*Totals, string, string) {
	t.Helper()
	w := NewWorker(cfg, fx.contig)
	var sites, pop bytes.Buffer
	freqs := make([]float64, k)
	for _, b := range fx.batches(from, to, k) {
		w.ProcessBatch(b, &sites, &pop, freqs)
	}
	return w.Totals(), sites.String(), pop.String()
}

// readTSV reads a headed TSV into a map keyed by the first column.
func readTSV(t testing.TB, path string) (header []string, rows map[string][]string, order []string) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	rows = map[string][]string{}
	for _, line := range strings.Split(strings.TrimRight(string(b), "\n"), "\n") {
		if strings.HasPrefix(line, "#") {
			continue
		}
		fl := strings.Split(line, "\t")
		if header == nil {
			header = fl
			continue
		}
		rows[fl[0]] = fl
		order = append(order, fl[0])
	}
	return
}

func col(header []string, name string) int {
	for i, h := range header {
		if h == name {
			return i
		}
	}
	return -1
}

func mustRead(t testing.TB, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}
