package main

import (
	"bytes"
	"compress/gzip"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"testing"
	"time"

	"fgauge/vcfscan"
)

// badDir is the malformed-input corpus written by testdata/bad/gen (its
// README lists what is wrong with each file).
var badDir = filepath.Join("..", "..", "testdata", "bad")

// badRun runs one fgauge command line in-process and returns the exit
// code and what it printed on stderr.
func badRun(t *testing.T, args ...string) (int, string) {
	t.Helper()
	var out, errb bytes.Buffer
	env := &runEnv{stdout: &out, stderr: &errb, stdin: strings.NewReader(""), argv: append([]string{"fgauge"}, args...)}
	code := run(context.Background(), env, args)
	return code, errb.String()
}

// leftovers lists what is in dir (nil when dir does not exist).
func leftovers(t *testing.T, dir string) []string {
	t.Helper()
	ents, err := os.ReadDir(dir)
	if os.IsNotExist(err) {
		return nil
	}
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range ents {
		names = append(names, e.Name())
	}
	return names
}

// badCase is one malformed (or legal but suspicious) input and what scan
// must do with it. What is malformed follows the specifications in
// hts-specs: VCF 4.2 (header layout section 1.4-1.5, data lines 1.6),
// BCF 2.2 (section 6) and BGZF (SAM/BAM format specification section 4.1,
// including the 28-byte EOF block; section numbers from memory). Where the
// specifications allow a thing (POS 0, polyploid calls, a missing EOF
// block) or a tolerant reading does no harm (CRLF line endings) the
// decision is ours and written beside the row. The expected messages name the file and
// the place (line, BGZF virtual offset or BCF record) and say what was
// expected and found.
type badCase struct {
	file string   // in testdata/bad (or a path relative to this folder)
	args []string // extra scan options
	code int
	msg  []string // fragments of stderr, in any order
	warn string   // for code 0: a warning kind run.json must count
}

var badCases = []badCase{
	// Text VCF header.
	{file: "empty.vcf", code: 2, msg: []string{"empty.vcf: malformed input: input is empty; expected a VCF or BCF file"}},
	{file: "no_header.vcf", code: 2, msg: []string{"no_header.vcf:1: header:", "expected ##fileformat=VCFv4.x on the first line"}},
	{file: "missing_chrom_line.vcf", code: 2, msg: []string{"missing_chrom_line.vcf:5: header:", "data line before the #CHROM line"}},
	{file: "header_after_records.vcf", code: 2, msg: []string{"header_after_records.vcf:7:", "header lines must come before #CHROM"}},
	{file: "chrom_line_spaces.vcf", code: 2, msg: []string{"chrom_line_spaces.vcf:5: #CHROM:", "found 1 columns; are the columns separated by spaces?"}},
	{file: "too_few_fixed_columns.vcf", code: 2, msg: []string{"too_few_fixed_columns.vcf:5: #CHROM:", `column 8 is "goat_a", expected "INFO"`}},
	{file: "wrong_column_name.vcf", code: 2, msg: []string{"wrong_column_name.vcf:5: #CHROM:", `column 9 is "GENOTYPE", expected FORMAT`}},
	{file: "duplicate_samples.vcf", code: 2, msg: []string{"duplicate_samples.vcf:5: #CHROM:", `sample name "goat_a" appears in columns 10 and 12`}},
	{file: "empty_sample_name.vcf", code: 2, msg: []string{"empty_sample_name.vcf:5: #CHROM:", "sample column 4 has an empty name"}},
	{file: "binary_garbage.vcf", code: 2, msg: []string{"binary_garbage.vcf:1: header:", "the input is not a VCF"}},
	// A valid header without records is legal: empty tables and a warning.
	{file: "header_only.vcf", code: 0, warn: "no_sites_kept"},
	{file: "sample_without_calls.vcf", code: 0, warn: "samples_without_calls"},
	{file: "sample_without_calls.vcf", args: []string{"--no-roh"}, code: 0, warn: "samples_low_call_rate"},
	{file: "contig_without_length.vcf", code: 0, warn: "f_roh_denominator_from_site_span"},
	{file: "contig_without_length.vcf", args: []string{"--no-roh"}, code: 0, warn: "contig_without_length"},

	// Text VCF records.
	{file: "too_few_sample_columns.vcf", code: 2, msg: []string{"too_few_sample_columns.vcf:7: samples: wrong number of sample columns: expected 3", "found 2"}},
	{file: "too_many_sample_columns.vcf", code: 2, msg: []string{"too_many_sample_columns.vcf:6: samples:", "expected 3 sample columns as in the #CHROM line, found 4"}},
	{file: "too_few_columns.vcf", code: 2, msg: []string{"too_few_columns.vcf:6:", "line has 4 tab-separated columns, expected at least 8"}},
	{file: "pos_not_numeric.vcf", code: 2, msg: []string{"pos_not_numeric.vcf:6: POS:", `found "10a0"`}},
	{file: "pos_negative.vcf", code: 2, msg: []string{"pos_negative.vcf:6: POS:", `found "-5"`}},
	{file: "pos_overflow.vcf", code: 2, msg: []string{"pos_overflow.vcf:6: POS:", `found "99999999999999999999999"`}},
	// POS 0 is legal: VCF 4.2 section 1.6.1 reserves 0 (and N+1) for telomeres.
	{file: "pos_zero.vcf", code: 0},
	{file: "unsorted_positions.vcf", code: 2, msg: []string{"unsorted_positions.vcf:8: POS: records out of order: position 1500 on 1 comes after position 3000 (line 7)", "sort the file by chromosome and position, compress it again with BGZF and rebuild its index"}},
	{file: "chrom_split.vcf", code: 2, msg: []string{"chrom_split.vcf:8: CHROM: records out of order: chromosome 1 appears again", "keep each chromosome's records together: sort the file by chromosome and position"}},
	// Without ROH and regions, order does not matter to the statistics.
	{file: "unsorted_positions.vcf", args: []string{"--no-roh"}, code: 0},
	{file: "gt_allele_beyond_alt.vcf", code: 2, msg: []string{"gt_allele_beyond_alt.vcf:7: GT:", `sample "goat_b": genotype "0/2": allele 2 is used but ALT lists only 1 allele`}},
	{file: "gt_not_a_number.vcf", code: 2, msg: []string{"gt_not_a_number.vcf:6: GT:", `genotype "a/b": expected an allele number or '.'`}},
	// Triploid calls are legal VCF; a diploid measure cannot use them:
	// counted as missing and warned.
	{file: "triploid.vcf", code: 0, warn: "polyploid_calls_as_missing"},
	// CRLF line endings are accepted: the CR is dropped.
	{file: "crlf.vcf", code: 0},
	// A NUL inside REF makes it two bytes: not a SNP, skipped and counted.
	{file: "nul_in_record.vcf", code: 0},

	// Limits, each with the option that raises it.
	{file: "many_alleles.vcf", args: []string{"--guard-alleles", "3"}, code: 2, msg: []string{"many_alleles.vcf:6: ALT: limit exceeded: 6 alleles, more than the limit of 3; raise --guard-alleles"}},
	{file: "many_alleles.vcf", code: 0}, // default limit: the 6-allele site is skipped as multiallelic
	{file: "long_line.vcf", args: []string{"--guard-line-bytes", "4096"}, code: 2, msg: []string{"long_line.vcf:7: line: limit exceeded: line of 6041 bytes is longer than the limit of 4096; raise --guard-line-bytes"}},
	{file: "crlf.vcf", args: []string{"--guard-samples", "2"}, code: 2, msg: []string{"crlf.vcf:5: #CHROM: limit exceeded: 3 samples, more than the limit of 2; raise --guard-samples"}},

	// BGZF and gzip containers.
	{file: "bgzf_truncated_mid_block.vcf.gz", code: 2, msg: []string{"bgzf_truncated_mid_block.vcf.gz (virtual offset 6553600)", "truncated input: block at byte 100", "the file was cut short"}},
	{file: "bgzf_flipped_crc.vcf.gz", code: 2, msg: []string{"bgzf_flipped_crc.vcf.gz (virtual offset 6553600)", "checksum mismatch: block at byte 100: CRC32"}},
	{file: "bgzf_bad_header.vcf.gz", code: 2, msg: []string{"bgzf_bad_header.vcf.gz (virtual offset 6553600)", "block at byte 100: expected a BGZF block header (1f 8b 08", "found 1f 8c 08 04"}},
	{file: "bgzf_isize_too_big.vcf.gz", code: 2, msg: []string{"bgzf_isize_too_big.vcf.gz (virtual offset 6553600)", "ISIZE says 70000"}},
	{file: "bgzf_corrupt_deflate.vcf.gz", code: 2, msg: []string{"bgzf_corrupt_deflate.vcf.gz (virtual offset 6553600)", "the file is damaged"}},
	{file: "bgzf_missing_eof.vcf.gz", code: 0, warn: "bgzf_missing_eof"},
	{file: "gzip_truncated.vcf.gz", code: 2, msg: []string{"gzip_truncated.vcf.gz: gzip: truncated input"}},
	{file: "gzip_flipped_crc.vcf.gz", code: 2, msg: []string{"gzip_flipped_crc.vcf.gz: gzip: checksum mismatch"}},

	// BCF.
	{file: "bcf_wrong_magic.bcf", code: 2, msg: []string{"bcf_wrong_magic.bcf:1: header:", `found "BCX\x02\x02`, "the input is not a VCF"}},
	{file: "bcf_version_21.bcf", code: 2, msg: []string{"bcf_version_21.bcf (virtual offset 0): BCF magic:", "BCF version 2.1 is not supported, only 2.2"}},
	{file: "bcf_truncated_record.bcf", code: 2, msg: []string{"bcf_truncated_record.bcf: record 2 (virtual offset 12803): record: truncated input: record of 972 bytes cut short"}},
	{file: "bcf_header_length_lie.bcf", args: []string{"--guard-line-bytes", "300000000"}, code: 2, msg: []string{"bcf_header_length_lie.bcf: BCF header: truncated input: header text has 17215 of 200000000 bytes"}},
	{file: "bcf_header_length_lie.bcf", code: 2, msg: []string{"bcf_header_length_lie.bcf: BCF header: limit exceeded: header length 200000000 bytes is over the 67108864 limit; raise --guard-line-bytes"}},
	{file: "bcf_record_length_lie.bcf", code: 2, msg: []string{"bcf_record_length_lie.bcf: record 0 (virtual offset 10882): record: limit exceeded: record of 200000051 bytes is over the 67108864 limit; raise --guard-line-bytes"}},
	{file: "bcf_sample_count_mismatch.bcf", code: 2, msg: []string{"bcf_sample_count_mismatch.bcf: record 0 (virtual offset 10882): n_sample:", "wrong number of sample columns: record has 5 samples, the header 4"}},
	{file: "bcf_negative_pos.bcf", code: 2, msg: []string{"bcf_negative_pos.bcf: record 0 (virtual offset 10882)", "POS: malformed input: position -5 before the start of the contig"}},
	{file: "bcf_plain_gzip.bcf", code: 2, msg: []string{"bcf_plain_gzip.bcf:", "BCF must be BGZF-compressed"}},

	// Indexes (region queries).
	{file: "index_past_end.vcf.gz", args: []string{"--region", "1"}, code: 2, msg: []string{"index_past_end.vcf.gz.tbi:", "points at byte 100304 but", "index_past_end.vcf.gz has only 304 bytes", "rebuild it"}},
	{file: "index_garbage.vcf.gz", args: []string{"--region", "1"}, code: 2, msg: []string{"index_garbage.vcf.gz.tbi: malformed input: index claims -1133610742 bytes of names but 168 remain; the index is damaged: rebuild it"}},
	{file: "crlf.vcf", args: []string{"--region", "1"}, code: 2, msg: []string{"crlf.vcf: no index file next to the data file: regions need a BGZF-compressed file with a .tbi or .csi index"}},

	// Side files named by options.
	{file: "crlf.vcf", args: []string{"--populations", "@populations_bad.tsv"}, code: 2, msg: []string{"populations_bad.tsv:3: want 2 columns (sample population), got 3"}},
	{file: "crlf.vcf", args: []string{"--pedigree", "@pedigree_loop.tsv"}, code: 2, msg: []string{"pedigree_loop.tsv:4:", "animal is its own ancestor"}},
	{file: "crlf.vcf", args: []string{"--region", "@@regions_bad.txt"}, code: 2, msg: []string{"regions_bad.txt:2: bad region"}},
	{file: "crlf.vcf", args: []string{"--recombination-map", "@genetic_map_bad.txt"}, code: 2, msg: []string{"genetic_map_bad.txt:2:", `cM "abc" is not a number`}},
	{file: "crlf.vcf", args: []string{"--freqs", "@freqs_bad.tsv"}, code: 2, msg: []string{"freqs_bad.tsv:1:", `alt_freq "1.5" is not a number in [0,1]`}},
	{file: "crlf.vcf", args: []string{"--samples", "@samples_list.txt"}, code: 2, msg: []string{"crlf.vcf: unknown sample: requested sample \"goat_z\" is not in the file (it has 3 samples); check the spelling"}},
	{file: "no_such_file.vcf", code: 2, msg: []string{"no_such_file.vcf", "no such file"}},
	{file: "crlf.vcf", args: []string{"--populations", "@no_such_file.tsv"}, code: 2, msg: []string{"no_such_file.tsv", "no such file"}},
	{file: "crlf.vcf", args: []string{"--pedigree", "@no_such_file.tsv"}, code: 2, msg: []string{"no_such_file.tsv", "no such file"}},
	{file: "crlf.vcf", args: []string{"--region", "@@no_such_file.txt"}, code: 2, msg: []string{"no_such_file.txt", "no such file"}},
	{file: "crlf.vcf", args: []string{"--recombination-map", "@no_such_file.txt"}, code: 2, msg: []string{"no_such_file.txt", "no such file"}},
}

// TestBadInputs runs scan on every corpus file and checks the exit code,
// the message, and that a failed run leaves OUTDIR as it found it: absent
// when scan created it, holding only the user's own file otherwise.
func TestBadInputs(t *testing.T) {
	covered := map[string]bool{}
	for _, tc := range badCases {
		covered[tc.file] = true
		for _, a := range tc.args {
			if strings.HasPrefix(a, "@") {
				covered[strings.TrimLeft(a, "@")] = true
			}
		}
		name := tc.file
		if len(tc.args) > 0 {
			name += strings.Join(tc.args, "_")
		}
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			for _, existing := range []bool{false, true} {
				out := filepath.Join(t.TempDir(), "out")
				if existing {
					if err := os.Mkdir(out, 0o755); err != nil {
						t.Fatal(err)
					}
					if err := os.WriteFile(filepath.Join(out, "notes.txt"), []byte("mine"), 0o644); err != nil {
						t.Fatal(err)
					}
				}
				args := []string{"scan", filepath.Join(badDir, tc.file), "-o", out, "--no-progress", "--threads", "2"}
				for _, a := range tc.args {
					// "@name" is a file of testdata/bad; "@@name" is
					// "@" followed by one (--region @FILE).
					if f, ok := strings.CutPrefix(a, "@@"); ok {
						a = "@" + filepath.Join(badDir, f)
					} else if strings.HasPrefix(a, "@") {
						a = filepath.Join(badDir, a[1:])
					}
					args = append(args, a)
				}
				code, stderr := badRun(t, args...)
				if code != tc.code {
					t.Fatalf("exit code %d, want %d; stderr:\n%s", code, tc.code, stderr)
				}
				for _, m := range tc.msg {
					if !strings.Contains(stderr, m) {
						t.Errorf("stderr lacks %q:\n%s", m, stderr)
					}
				}
				if strings.Contains(stderr, "panic") || strings.Contains(stderr, "goroutine ") {
					t.Errorf("stderr shows a crash:\n%s", stderr)
				}
				left := leftovers(t, out)
				if tc.code != 0 {
					want := ""
					if existing {
						want = "notes.txt"
					}
					if strings.Join(left, ",") != want {
						t.Errorf("OUTDIR holds %v after a failed run, want %q", left, want)
					}
					continue
				}
				var info struct {
					Warnings map[string]int64 `json:"warnings"`
				}
				raw, err := os.ReadFile(filepath.Join(out, "run.json"))
				if err != nil {
					t.Fatalf("%v (left: %v)", err, left)
				}
				if err := json.Unmarshal(raw, &info); err != nil {
					t.Fatal(err)
				}
				if tc.warn != "" && info.Warnings[tc.warn] == 0 {
					t.Errorf("run.json warnings %v lack %s", info.Warnings, tc.warn)
				}
				for _, n := range left {
					if strings.HasPrefix(n, ".fgauge-tmp") {
						t.Errorf("temporary folder %s left after success", n)
					}
				}
			}
		})
	}
	// Every corpus file is exercised.
	ents, err := os.ReadDir(badDir)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range ents {
		n := e.Name()
		if e.IsDir() || n == "README.md" || strings.HasSuffix(n, ".tbi") {
			continue
		}
		if !covered[n] {
			t.Errorf("corpus file %s has no case", n)
		}
	}
}

// TestBadInputsExistingResults: an OUTDIR holding results is refused
// without --force and left untouched.
func TestBadInputsExistingResults(t *testing.T) {
	out := t.TempDir()
	old := []byte("old results\n")
	if err := os.WriteFile(filepath.Join(out, "samples.tsv"), old, 0o644); err != nil {
		t.Fatal(err)
	}
	code, stderr := badRun(t, "scan", filepath.Join(badDir, "crlf.vcf"), "-o", out, "--no-progress")
	if code != 2 || !strings.Contains(stderr, "already holds results (samples.tsv)") || !strings.Contains(stderr, "--force") {
		t.Fatalf("code %d, stderr %s", code, stderr)
	}
	if got, _ := os.ReadFile(filepath.Join(out, "samples.tsv")); !bytes.Equal(got, old) {
		t.Errorf("samples.tsv changed: %q", got)
	}
	if left := leftovers(t, out); len(left) != 1 {
		t.Errorf("left %v", left)
	}
	// A failing run with --force still keeps the old results.
	code, _ = badRun(t, "scan", filepath.Join(badDir, "pos_negative.vcf"), "-o", out, "--no-progress", "--force")
	if code != 2 {
		t.Fatalf("code %d", code)
	}
	if got, _ := os.ReadFile(filepath.Join(out, "samples.tsv")); !bytes.Equal(got, old) {
		t.Errorf("a failed --force run changed samples.tsv: %q", got)
	}
	if left := leftovers(t, out); len(left) != 1 {
		t.Errorf("left %v", left)
	}
}

// TestBadInputCancelled: a scan whose context is already cancelled exits
// 130 and leaves nothing behind.
func TestBadInputCancelled(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	var errb bytes.Buffer
	args := []string{"scan", filepath.Join("..", "..", "testdata", "cohort189.vcf.gz"), "-o", out, "--no-progress"}
	start := time.Now()
	code := run(ctx, &runEnv{stdout: &bytes.Buffer{}, stderr: &errb, argv: args}, args)
	if code != exitInterrupted || !strings.Contains(errb.String(), "interrupted") {
		t.Fatalf("code %d, stderr %s", code, errb.String())
	}
	if d := time.Since(start); d > 5*time.Second {
		t.Errorf("took %v to stop", d)
	}
	if left := leftovers(t, out); left != nil {
		t.Errorf("left %v", left)
	}
}

// TestBadInputsHuge builds the hostile inputs too large to commit in a
// temporary folder: a 200 MB single line, a BGZF bomb (one 64 KiB block of
// zeros repeated to inflate to 1 GiB, 1.7 MB on disk) and a plain gzip bomb
// (256 MiB of zeros in about 250 kB). Each is refused at the default
// --guard-line-bytes, with exit 2 and nothing left in OUTDIR.
func TestBadInputsHuge(t *testing.T) {
	if raceEnabled {
		t.Skip("gigabyte-scale inputs take a minute under the race detector; the small corpus covers the same code paths")
	}
	dir := t.TempDir()
	head := "##fileformat=VCFv4.2\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tgoat_a\n1\t10\t.\tA\tG\t.\tPASS\tNOTE="

	line := filepath.Join(dir, "line200mb.vcf")
	f, err := os.Create(line)
	if err != nil {
		t.Fatal(err)
	}
	f.WriteString(head)
	chunk := bytes.Repeat([]byte("x"), 1<<20)
	for i := 0; i < 200; i++ {
		f.Write(chunk)
	}
	f.WriteString("\tGT\t0/1\n")
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}

	var bomb bytes.Buffer
	bw := vcfscan.NewBGZFWriter(&bomb, 9)
	bw.Write([]byte(head))
	bw.Flush()
	zeros := make([]byte, 0xff00)
	var one bytes.Buffer
	zw := vcfscan.NewBGZFWriter(&one, 9)
	zw.Write(zeros)
	zw.Close()
	block := one.Bytes()[:one.Len()-28] // without its EOF block
	for i := 0; i < (1<<30)/len(zeros); i++ {
		bomb.Write(block)
	}
	bw.Close()
	bgzfBomb := filepath.Join(dir, "bomb.vcf.gz")
	if err := os.WriteFile(bgzfBomb, bomb.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}

	var gz bytes.Buffer
	gw, _ := gzip.NewWriterLevel(&gz, gzip.BestCompression)
	gw.Write([]byte(head))
	big := make([]byte, 1<<20)
	for i := 0; i < 256; i++ {
		gw.Write(big)
	}
	gw.Close()
	gzBomb := filepath.Join(dir, "bomb_plain.vcf.gz")
	if err := os.WriteFile(gzBomb, gz.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	t.Logf("BGZF bomb %d bytes, gzip bomb %d bytes", bomb.Len(), gz.Len())

	// A 9 MB header naming 1,000,001 samples: each sample costs scan
	// about 1.6 kB (5 million cost 7.9 GB RSS), so the default
	// --guard-samples refuses it before anything is allocated per sample.
	many := filepath.Join(dir, "many_samples.vcf")
	var hb bytes.Buffer
	hb.WriteString("##fileformat=VCFv4.2\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT")
	for i := 0; i <= 1_000_000; i++ {
		hb.WriteString("\ts")
		hb.WriteString(strconv.Itoa(i))
	}
	hb.WriteString("\n")
	if err := os.WriteFile(many, hb.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	code, stderr := badRun(t, "scan", many, "-o", filepath.Join(dir, "out_many"), "--no-progress")
	if want := "many_samples.vcf:2: #CHROM: limit exceeded: 1000001 samples, more than the limit of 1000000; raise --guard-samples"; code != 2 || !strings.Contains(stderr, want) {
		t.Errorf("code %d, stderr %s; want 2 and %q", code, stderr, want)
	}

	for _, in := range []string{line, bgzfBomb, gzBomb} {
		t.Run(filepath.Base(in), func(t *testing.T) {
			out := filepath.Join(dir, "out_"+filepath.Base(in))
			code, stderr := badRun(t, "scan", in, "-o", out, "--no-progress", "--threads", "2")
			want := filepath.Base(in) + ":3: line: limit exceeded: line longer than 67108864 bytes; raise --guard-line-bytes"
			if code != 2 || !strings.Contains(stderr, want) {
				t.Fatalf("code %d, stderr %s; want 2 and %q", code, stderr, want)
			}
			if left := leftovers(t, out); left != nil {
				t.Errorf("left %v", left)
			}
		})
	}
}

// TestEdgeFilesScan takes every shared edge-case file (testdata/edge, from
// python3-cyvcf2 0.30.18 and r-bioc-variantannotation 1.44.1; see
// testdata/SOURCES.md) through fgauge scan. The reader-level decisions are
// in vcfscan/edge_test.go; here: the exit code, the records read and kept
// in run.json, and the warnings it counts. Two upstream files list TP53
// records out of order: refused while runs of homozygosity are on (they
// need sorted input), read with --no-roh.
func TestEdgeFilesScan(t *testing.T) {
	type want struct {
		args       []string
		code       int
		read, kept int64
		warns      string // sorted warning kinds in run.json
		msg        string // for code 2
	}
	cases := map[string][]want{
		"FORMAT_header_no_SAMPLEs.vcf": {{read: 5, warns: "contig_not_in_header,no_sites_kept"}},
		"banded_gvcf.vcf":              {{read: 5, warns: "no_sites_kept"}},
		"buffer_realloc.vcf":           {{read: 2, warns: "no_sites_kept"}},
		"chr7-sub.vcf.gz":              {{read: 3791, kept: 988, warns: "contig_not_in_header,f_roh_denominator_from_site_span"}},
		"decomposed.vcf":               {{read: 1, kept: 1, warns: "samples_without_calls"}},
		"empty.vcf":                    {{code: 2, msg: "empty.vcf: malformed input: input is empty"}},
		"expand.vcf":                   {{read: 20, warns: "contig_not_in_header,no_sites_kept"}},
		"gl_chr1.vcf":                  {{read: 9, kept: 3, warns: "contig_not_in_header,f_roh_denominator_from_site_span,low_depth"}}, // low-coverage GL data: depth 1.3 from the likelihoods
		"issue_198.vcf":                {{read: 2, kept: 2, warns: "samples_without_calls"}},
		"missing-FORMAT-metadata-elt.vcf": {
			{code: 2, msg: "missing-FORMAT-metadata-elt.vcf:12: POS: records out of order: position 1011392 on TP53 comes after position 1012027 (line 11)"},
			{args: []string{"--no-roh"}, read: 3, warns: "contig_not_in_header,no_sites_kept"}},
		"multiple_INFO_fields.vcf": {{read: 2, warns: "no_sites_kept"}},
		"no-seq-len.vcf":           {{read: 1, kept: 1, warns: "contig_without_length,f_roh_denominator_from_site_span,samples_without_calls"}},
		"no-seq-names.vcf":         {{read: 1, kept: 1, warns: "contig_not_in_header,f_roh_denominator_from_site_span,samples_without_calls"}},
		"no_FORMAT_column.vcf":     {{read: 5, warns: "contig_not_in_header,no_sites_kept"}},
		"no_GENO_row.vcf": {
			{code: 2, msg: "no_GENO_row.vcf:12: POS: records out of order"},
			{args: []string{"--no-roh"}, read: 3, warns: "contig_not_in_header,no_sites_kept"}},
		"no_INFO_header.vcf":                      {{read: 5, kept: 5, warns: "contig_not_in_header,f_roh_denominator_from_site_span,samples_without_calls"}},
		"structural.vcf":                          {{read: 7, warns: "contig_not_in_header,no_sites_kept"}},
		"test-format-string.vcf":                  {{read: 4, kept: 2, warns: "contig_not_in_header,f_roh_denominator_from_site_span,haploid_calls,polyploid_calls_as_missing,samples_low_call_rate"}},
		"test-genotypes.vcf":                      {{read: 5, kept: 5, warns: "haploid_calls,samples_low_call_rate"}},
		"test-haploidX.vcf":                       {{read: 777, kept: 689, warns: "f_roh_denominator_from_site_span,haploid_calls,samples_without_calls"}},
		"test-hemi.vcf":                           {{read: 2, kept: 1, warns: "contig_without_length,f_roh_denominator_from_site_span,samples_without_calls"}},
		"test-invalid-header.vcf":                 {{code: 2, msg: "test-invalid-header.vcf:2: #CHROM: malformed input: sample column 2 has an empty name"}},
		"test-multiallelic-homozygous-alt.vcf.gz": {{read: 1, warns: "no_sites_kept"}},
		"test.mnp.vcf":                            {{read: 6, warns: "no_sites_kept"}},
	}
	files, err := filepath.Glob(filepath.Join("..", "..", "testdata", "edge", "*"))
	if err != nil || len(files) != len(cases) {
		t.Fatalf("%d edge files, %d decisions (%v)", len(files), len(cases), err)
	}
	for _, f := range files {
		ws, ok := cases[filepath.Base(f)]
		if !ok {
			t.Errorf("no decision for %s", f)
			continue
		}
		for _, w := range ws {
			t.Run(filepath.Base(f)+strings.Join(w.args, "_"), func(t *testing.T) {
				t.Parallel()
				out := filepath.Join(t.TempDir(), "out")
				args := append([]string{"scan", f, "-o", out, "--no-progress", "--threads", "2"}, w.args...)
				code, stderr := badRun(t, args...)
				if code != w.code {
					t.Fatalf("exit %d, want %d:\n%s", code, w.code, stderr)
				}
				if code != 0 {
					if !strings.Contains(stderr, w.msg) {
						t.Errorf("stderr lacks %q:\n%s", w.msg, stderr)
					}
					if left := leftovers(t, out); left != nil {
						t.Errorf("left %v", left)
					}
					return
				}
				var info struct {
					Records  struct{ Read, Kept int64 }
					Warnings map[string]int64
				}
				raw, err := os.ReadFile(filepath.Join(out, "run.json"))
				if err != nil {
					t.Fatal(err)
				}
				if err := json.Unmarshal(raw, &info); err != nil {
					t.Fatal(err)
				}
				kinds := sortedKeys(info.Warnings)
				if info.Records.Read != w.read || info.Records.Kept != w.kept || strings.Join(kinds, ",") != w.warns {
					t.Errorf("read %d kept %d warnings %v; want %d %d %q", info.Records.Read, info.Records.Kept, kinds, w.read, w.kept, w.warns)
				}
			})
		}
	}
}

// TestBadInputStaleIndex: an index last modified before its data file is
// refused for region queries, with the advice to rebuild it.
func TestBadInputStaleIndex(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "cohort189.vcf.gz")
	for _, ext := range []string{"", ".tbi"} {
		b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "cohort189.vcf.gz"+ext))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(data+ext, b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	old := time.Now().Add(-time.Hour)
	if err := os.Chtimes(data+".tbi", old, old); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	code, stderr := badRun(t, "scan", data, "--region", "20", "-o", out, "--no-progress")
	if code != 2 || !strings.Contains(stderr, "cohort189.vcf.gz.tbi: index is older than the data file") || !strings.Contains(stderr, "rebuild the index") {
		t.Fatalf("code %d, stderr %s", code, stderr)
	}
	if left := leftovers(t, out); left != nil {
		t.Errorf("left %v", left)
	}
}

// TestBadInputSideFileLongLine: a sample list with a 200 kB line is an
// input error (exit 2) that names the file.
func TestBadInputSideFileLongLine(t *testing.T) {
	dir := t.TempDir()
	list := filepath.Join(dir, "keep.txt")
	if err := os.WriteFile(list, []byte("goat_a\n"+strings.Repeat("x", 200_000)+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	for _, opt := range []string{"--samples", "--exclude-samples"} {
		code, stderr := badRun(t, "scan", filepath.Join(badDir, "crlf.vcf"), opt, list, "-o", out, "--no-progress")
		if code != 2 || !strings.Contains(stderr, "keep.txt") {
			t.Errorf("%s: code %d, stderr %s", opt, code, stderr)
		}
		if left := leftovers(t, out); left != nil {
			t.Errorf("left %v", left)
		}
	}
}

// sortedKeys returns the keys of m in order.
func sortedKeys[V any](m map[string]V) []string {
	ks := make([]string, 0, len(m))
	for k := range m {
		ks = append(ks, k)
	}
	sort.Strings(ks)
	return ks
}
