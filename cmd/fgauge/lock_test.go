package main

import (
	"bufio"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestSecondRunRefused starts a scan that reads an invented cohort from a
// named pipe and, while it holds OUTDIR, starts a second scan (with
// --force) and a merge into the same folder: both must exit 2 naming the
// folder and leave nothing there. Then the first scan gets the rest of its
// input and must finish with complete, unmixed outputs.
func TestSecondRunRefused(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "cohort.vcf")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("no named pipes here: %v", err)
	}
	out := filepath.Join(dir, "out")
	const nSamples, firstPart, total = 20, 3000, 4000
	release := make(chan struct{})
	go func() {
		f, err := os.OpenFile(fifo, os.O_WRONLY, 0)
		if err != nil {
			return
		}
		defer f.Close()
		w := bufio.NewWriter(f)
		w.WriteString("##fileformat=VCFv4.2\n##contig=<ID=1,length=100000000>\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT")
		for i := 0; i < nSamples; i++ {
			fmt.Fprintf(w, "\tgoat_%d", i)
		}
		w.WriteString("\n")
		gts := [4]string{"\t0/0", "\t0/1", "\t1/1", "\t./."}
		for r := 0; r < total; r++ {
			if r == firstPart {
				w.Flush()
				<-release
			}
			fmt.Fprintf(w, "1\t%d\t.\tA\tG\t.\tPASS\t.\tGT", 100+r*100)
			for i := 0; i < nSamples; i++ {
				w.WriteString(gts[(r*7+i*i)%4])
			}
			w.WriteString("\n")
		}
		w.Flush()
	}()
	type result struct {
		code int
		msg  string
	}
	first := make(chan result, 1)
	go func() {
		code, msg := runCmd(t, "scan", fifo, "-o", out, "--no-progress", "--threads", "2", "--no-roh")
		first <- result{code, msg}
	}()
	deadline := time.Now().Add(30 * time.Second)
	// The staging folder appears once the first scan holds OUTDIR.
	for m, _ := filepath.Glob(filepath.Join(out, ".fgauge-tmp-*")); len(m) == 0; m, _ = filepath.Glob(filepath.Join(out, ".fgauge-tmp-*")) {
		if time.Now().After(deadline) {
			close(release)
			t.Fatalf("the first scan wrote nothing in 30 s: %+v", <-first)
		}
		time.Sleep(20 * time.Millisecond)
	}
	for _, args := range [][]string{
		{"scan", "../../testdata/cohort189.vcf.gz", "-o", out, "--force", "--no-progress"},
		{"scan", "../../testdata/cohort189.vcf.gz", "-o", out, "--no-progress"},
	} {
		code, msg := runCmd(t, args...)
		if code != exitBadInput || !strings.Contains(msg, out) || !strings.Contains(msg, "another fgauge run") {
			t.Errorf("%v: exit %d, want %d with the folder named: %s", args, code, exitBadInput, msg)
		}
	}
	close(release)
	r := <-first
	if r.code != exitOK {
		t.Fatalf("first scan: exit %d: %s", r.code, r.msg)
	}
	header, rows := readTable(t, filepath.Join(out, "samples.tsv"))
	if len(rows) != nSamples || header[0] != "sample" || rows[0][0] != "goat_0" {
		t.Errorf("samples.tsv: %d rows, header %v", len(rows), header)
	}
	_, sites := readTable(t, filepath.Join(out, "sites.tsv.gz"))
	if len(sites) != total {
		t.Errorf("sites.tsv.gz has %d rows, want %d (the first scan's input)", len(sites), total)
	}
	ents, _ := os.ReadDir(out)
	var names []string
	for _, e := range ents {
		names = append(names, e.Name())
	}
	if strings.Join(names, " ") != "run.json samples.tsv sites.tsv.gz sites.tsv.gz.tbi" {
		t.Errorf("OUTDIR holds %v", names)
	}
	// The lock is released: a later run may use the folder.
	if code, msg := runCmd(t, "scan", "../../testdata/cohort189.vcf.gz", "-o", out, "--force", "--no-progress"); code != exitOK {
		t.Errorf("scan after the first finished: exit %d: %s", code, msg)
	}
}
