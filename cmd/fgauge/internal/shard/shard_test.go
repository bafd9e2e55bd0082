package shard_test

import (
	"context"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fgauge/cmd/fgauge/internal/scanrun"
	"fgauge/cmd/fgauge/internal/shard"
	"fgauge/roh"
	"fgauge/stats"
	"fgauge/vcfscan"
)

// cohort189 is a small public fixture (testdata/SOURCES.md).
const cohort189 = "../../../../testdata/cohort189.vcf.gz"

// scanShard scans input (the given regions, or all of it) as a shard with
// the scan command's defaults, writing its outputs to out and its state
// to state.
func scanShard(input, out, state string, regions []string, options ...string) error {
	var regs []vcfscan.Region
	for _, r := range regions {
		reg, err := vcfscan.ParseRegion(r)
		if err != nil {
			return err
		}
		regs = append(regs, reg)
	}
	rc := roh.DefaultConfig()
	if err := rc.Validate(); err != nil {
		return err
	}
	if options == nil {
		options = []string{"min-call-rate=0.9"}
	}
	_, err := scanrun.Run(context.Background(), scanrun.Config{
		Input: input, Out: out, Force: true, Threads: 1,
		Read:     vcfscan.Options{Limits: scanrun.DefaultLimits(), Regions: regs},
		Stats:    scanrun.StatsSettings{HWEMethod: "exact", MinCallRate: 0.9, JackknifeBlockMB: 5},
		ROH:      rc,
		StateOut: state, Options: options, Version: "test", Stderr: io.Discard,
	})
	return err
}

// TestStateRoundTrip writes a state read back from a scan and reads it
// again: the copy merges like the original, and edits to the identity
// are refused by Merge with ErrMismatch, damage with ErrCorrupt; both name
// the file.
func TestStateRoundTrip(t *testing.T) {
	dir := t.TempDir()
	var states []string
	for i, r := range []string{"1:1-12000", "1:12001-"} {
		out := filepath.Join(dir, fmt.Sprintf("s%d", i+1))
		if err := scanShard(cohort189, out, out+".state", []string{r}); err != nil {
			t.Fatal(err)
		}
		states = append(states, out+".state")
	}
	st, err := shard.ReadFile(states[1])
	if err != nil {
		t.Fatal(err)
	}
	if st.WholeFile || len(st.Regions) != 1 || st.Regions[0] != (shard.Region{Chrom: "1", Start: 12001, End: math.MaxInt64}) {
		t.Errorf("regions %+v", st.Regions)
	}
	if got := shard.DescribeRegions(st); got != "1:12001-" {
		t.Errorf("DescribeRegions = %q", got)
	}
	rewrite := func(name string, edit func(*shard.State)) string {
		c, err := shard.ReadFile(states[1])
		if err != nil {
			t.Fatal(err)
		}
		edit(c)
		c.SitesFile, _ = filepath.Abs(shard.SiteTablePath(states[1], c.SitesFile))
		p := filepath.Join(dir, name+".state")
		if err := shard.WriteFile(p, c); err != nil {
			t.Fatal(err)
		}
		return p
	}
	same := rewrite("copy", func(*shard.State) {})
	otherOpts := filepath.Join(dir, "opts")
	if err := scanShard(cohort189, otherOpts, otherOpts+".state", []string{"1:12001-"}, "min-call-rate=0.5"); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name   string
		states []string
		want   error
		words  string
	}{
		{"copy", []string{states[0], same}, nil, ""},
		{"options", []string{states[0], otherOpts + ".state"}, shard.ErrMismatch, "min-call-rate"},
		{"version", []string{states[0], rewrite("version", func(s *shard.State) { s.Version = "0.0.1" })}, shard.ErrMismatch, "versions differ"},
		{"samples", []string{states[0], rewrite("samples", func(s *shard.State) { s.Samples = s.Samples[1:] })}, shard.ErrMismatch, "sample sets differ"},
		{"overlap", []string{states[0], states[1], same}, shard.ErrMismatch, "overlap"},
		{"no regions", []string{states[0], rewrite("noreg", func(s *shard.State) { s.Regions = nil })}, shard.ErrCorrupt, "names no regions"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			res, err := shard.Merge(context.Background(), shard.MergeConfig{States: tc.states, Out: filepath.Join(t.TempDir(), "m"), Threads: 1, Stderr: io.Discard})
			if tc.want == nil {
				if err != nil || res.States != 2 || res.Samples != 189 {
					t.Fatalf("merge: %+v, %v", res, err)
				}
				return
			}
			if !errors.Is(err, tc.want) {
				t.Fatalf("err = %v, want %v", err, tc.want)
			}
			if !strings.Contains(err.Error(), tc.words) || !strings.Contains(err.Error(), ".state") {
				t.Errorf("message %q lacks %q or the file", err, tc.words)
			}
		})
	}
	var check strings.Builder
	bad := filepath.Join(dir, "bad.state")
	os.WriteFile(bad, []byte("sample\tpopulation\n"), 0o644)
	if err := shard.Check(&check, []string{states[0], bad}); err == nil ||
		!strings.HasPrefix(check.String(), "ok\t"+states[0]+"\t1:1-12000\tfgauge test") || !strings.Contains(check.String(), "bad\t"+bad) {
		t.Errorf("Check: %v\n%s", err, check.String())
	}
}

// benchStates writes n shard states of nSamples samples each: one real
// state from a scan of an invented cohort (random genotypes, 2,000 sites),
// copied n times as n different whole chromosomes.
func benchStates(b *testing.B, dir string, n, nSamples int) []string {
	b.Helper()
	var sb strings.Builder
	sb.WriteString("##fileformat=VCFv4.2\n##contig=<ID=1,length=10000000>\n##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype\">\n")
	sb.WriteString("#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT")
	for s := 0; s < nSamples; s++ {
		fmt.Fprintf(&sb, "\tanimal_%04d", s)
	}
	sb.WriteByte('\n')
	gts := []string{"0/0", "0/1", "1/1", "./."}
	x := uint64(12345)
	for site := 0; site < 2000; site++ {
		fmt.Fprintf(&sb, "1\t%d\t.\tA\tG\t.\tPASS\t.\tGT", 1000+site*4000)
		for s := 0; s < nSamples; s++ {
			x ^= x << 13
			x ^= x >> 7
			x ^= x << 17
			g := x % 16
			switch {
			case g < 7:
				g = 0
			case g < 12:
				g = 1
			case g < 15:
				g = 2
			default:
				g = 3
			}
			sb.WriteString("\t" + gts[g])
		}
		sb.WriteByte('\n')
	}
	input := filepath.Join(dir, "cohort.vcf")
	if err := os.WriteFile(input, []byte(sb.String()), 0o644); err != nil {
		b.Fatal(err)
	}
	statePath := filepath.Join(dir, "base.state")
	if err := scanShard(input, filepath.Join(dir, "base"), statePath, nil); err != nil {
		b.Fatalf("scan: %v", err)
	}
	base, err := shard.ReadFile(statePath)
	if err != nil {
		b.Fatal(err)
	}
	sites, _ := filepath.Abs(shard.SiteTablePath(statePath, base.SitesFile))
	names := make([]string, n)
	for i := range names {
		names[i] = fmt.Sprint(i + 1)
	}
	blocks := base.Totals.Blocks
	chrom := base.ROH.Chroms[0]
	var paths []string
	for i := 0; i < n; i++ {
		st := *base
		st.WholeFile = false
		st.Regions = []shard.Region{{Chrom: names[i], Start: 1, End: math.MaxInt64}}
		st.ContigOrder = names
		st.SitesFile = sites
		t := *base.Totals
		t.Blocks = map[stats.BlockKey]*stats.BlockAcc{}
		for k, v := range blocks {
			t.Blocks[stats.BlockKey{Chrom: names[i], Index: k.Index}] = v
		}
		st.Totals = &t
		r := *base.ROH
		c := chrom
		c.Name = names[i]
		r.Chroms = []roh.ChromResult{c}
		st.ROH = &r
		p := filepath.Join(dir, fmt.Sprintf("shard_%03d.state", i))
		if err := shard.WriteFile(p, &st); err != nil {
			b.Fatal(err)
		}
		paths = append(paths, p)
	}
	return paths
}

// BenchmarkMerge100States merges 100 shard states of 1,000 samples
// (statistics of 2,000 sites and the runs of one chromosome each; site
// tables joined). Target: seconds.
func BenchmarkMerge100States(b *testing.B) {
	dir := b.TempDir()
	paths := benchStates(b, dir, 100, 1000)
	var size int64
	for _, p := range paths {
		st, _ := os.Stat(p)
		size += st.Size()
	}
	cfg := shard.MergeConfig{States: paths, Out: filepath.Join(dir, "merged"), Force: true, Threads: 2, Stderr: io.Discard}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := shard.Merge(context.Background(), cfg); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(size)/float64(len(paths)), "state_bytes")
}

// TestCompareOutputDirs compares two output folders named by the
// environment (FGAUGE_COMPARE_SINGLE, FGAUGE_COMPARE_MERGED) as the
// identity tests do; testdata/slurm/cluster_test.sh uses it. Skipped
// otherwise.

// FuzzReadStateFile feeds damaged state files to the reader: it must
// return an error wrapping shard.ErrCorrupt (or a usage error for an
// unreadable file) and never panic; anything it accepts must be complete.
func FuzzReadStateFile(f *testing.F) {
	dir := f.TempDir()
	st := filepath.Join(dir, "seed.state")
	if err := scanShard(cohort189, filepath.Join(dir, "seed"), st, []string{"1:12001-"}); err != nil {
		f.Fatalf("scan: %v", err)
	}
	seed, err := os.ReadFile(st)
	if err != nil {
		f.Fatal(err)
	}
	f.Add(seed)
	f.Add(seed[:52]) // the fixed header: magic, format, length, SHA-256
	f.Add(seed[:len(seed)-1])
	f.Add([]byte("FGSTATE\x00"))
	f.Add([]byte{})
	f.Fuzz(func(t *testing.T, data []byte) {
		p := filepath.Join(t.TempDir(), "x.state")
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
		s, err := shard.ReadFile(p)
		if err != nil {
			if !errors.Is(err, shard.ErrCorrupt) {
				t.Fatalf("error does not wrap shard.ErrCorrupt: %v", err)
			}
			if !strings.Contains(err.Error(), p) {
				t.Fatalf("error does not name the file: %v", err)
			}
			return
		}
		if s.Totals == nil || s.Version == "" {
			t.Fatalf("accepted an incomplete state")
		}
	})
}

// TestShardOrderWithoutContigLines merges shards of a file whose contigs
// (2, 1, 10 in file order) have no ##contig lines: the genome order comes

// TestOldStateFormat: a state of format 1 (pieces inside the payload) is
// refused with a message asking to scan the shards again.
func TestOldStateFormat(t *testing.T) {
	raw := make([]byte, 8+4+8+32+16) // magic, version, length, SHA-256, payload
	copy(raw, "FGSTATE\x00")
	binary.LittleEndian.PutUint32(raw[8:], 1)
	p := filepath.Join(t.TempDir(), "old.state")
	if err := os.WriteFile(p, raw, 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := shard.ReadFile(p)
	if !errors.Is(err, shard.ErrCorrupt) || !strings.Contains(err.Error(), "older fgauge") || !strings.Contains(err.Error(), "scan the shards again") {
		t.Errorf("format 1 state: %v", err)
	}
}
