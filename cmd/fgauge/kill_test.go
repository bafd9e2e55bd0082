package main

import (
	"bufio"
	"bytes"
	"context"
	"fmt"
	"os"
	"os/exec"
	"os/signal"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestKillScan starts a real scan in a child process (this test binary
// re-executed, running the same code as main), feeds it genotypes through
// a named pipe without end, and signals it mid-run once it has written
// staged output. The child must exit 130 promptly and leave OUTDIR with
// only the file that was there before. In the stalled case the writer
// stops after 4 MB but keeps the pipe open: the reader is blocked in a read
// that cannot be interrupted, and the scan must still give up.
func TestKillScan(t *testing.T) {
	if os.Getenv("FGAUGE_KILL_ARGS") != "" {
		return // the child runs TestKillChild
	}
	for _, tc := range []struct {
		sig   syscall.Signal
		stall int64
	}{{syscall.SIGTERM, 0}, {syscall.SIGINT, 0}, {syscall.SIGTERM, 4 << 20}} {
		sig := tc.sig
		name := sig.String()
		if tc.stall > 0 {
			name += "_stalled_input"
		}
		t.Run(name, func(t *testing.T) {
			dir := t.TempDir()
			fifo := filepath.Join(dir, "cohort.vcf")
			if err := syscall.Mkfifo(fifo, 0o600); err != nil {
				t.Skipf("no named pipes here: %v", err)
			}
			out := filepath.Join(dir, "out")
			if err := os.Mkdir(out, 0o755); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(filepath.Join(out, "notes.txt"), []byte("mine"), 0o644); err != nil {
				t.Fatal(err)
			}
			args := []string{"scan", fifo, "-o", out, "--no-progress", "--threads", "2"}
			cmd := exec.Command(os.Args[0], "-test.run=^TestKillChild$", "-test.count=1")
			cmd.Env = append(os.Environ(), "FGAUGE_KILL_ARGS="+strings.Join(args, "\n"))
			var stderr bytes.Buffer
			cmd.Stdout, cmd.Stderr = &stderr, &stderr
			if err := cmd.Start(); err != nil {
				t.Fatal(err)
			}
			stop := make(chan struct{})
			written := make(chan int64, 1)
			go func() { written <- feedCohort(fifo, tc.stall, stop) }()

			// Mid-run: the staged sites table has received data.
			deadline := time.Now().Add(30 * time.Second)
			for !stagedSitesWritten(out) {
				if time.Now().After(deadline) {
					cmd.Process.Kill()
					t.Fatalf("no staged output after 30 s; child said:\n%s", stderr.String())
				}
				time.Sleep(20 * time.Millisecond)
			}
			sent := time.Now()
			if err := cmd.Process.Signal(sig); err != nil {
				t.Fatal(err)
			}
			done := make(chan error, 1)
			go func() { done <- cmd.Wait() }()
			select {
			case <-done:
			case <-time.After(15 * time.Second):
				cmd.Process.Kill()
				<-done
				t.Fatalf("child still running 15 s after %v; it said:\n%s", sig, stderr.String())
			}
			took := time.Since(sent)
			close(stop)
			n := <-written
			t.Logf("%v after %.1f MB of input; exited %d in %v", sig, float64(n)/1e6, cmd.ProcessState.ExitCode(), took.Round(time.Millisecond))
			if code := cmd.ProcessState.ExitCode(); code != exitInterrupted {
				t.Errorf("exit code %d, want %d; stderr:\n%s", code, exitInterrupted, stderr.String())
			}
			if !strings.Contains(stderr.String(), "fgauge: interrupted; temporary files removed") {
				t.Errorf("stderr:\n%s", stderr.String())
			}
			if left := leftovers(t, out); strings.Join(left, ",") != "notes.txt" {
				t.Errorf("OUTDIR holds %v after the interrupt, want only notes.txt", left)
			}
			if took > 5*time.Second {
				t.Errorf("took %v to stop after %v", took, sig)
			}
		})
	}
}

// stagedSitesWritten reports whether a staged sites table in out has data.
func stagedSitesWritten(out string) bool {
	m, _ := filepath.Glob(filepath.Join(out, ".fgauge-tmp-*", "sites.tsv.gz"))
	for _, p := range m {
		if st, err := os.Stat(p); err == nil && st.Size() > 0 {
			return true
		}
	}
	return false
}

// feedCohort writes an endless sorted VCF of 200 invented goats into the
// named pipe until stop is closed or the reader goes away, and returns the
// bytes written. With stall > 0 it stops writing after that many bytes and
// holds the pipe open until stop.
func feedCohort(fifo string, stall int64, stop <-chan struct{}) int64 {
	f, err := os.OpenFile(fifo, os.O_WRONLY, 0)
	if err != nil {
		return 0
	}
	defer f.Close()
	w := bufio.NewWriterSize(f, 1<<16)
	var n int64
	put := func(s string) bool {
		k, err := w.WriteString(s)
		n += int64(k)
		return err == nil
	}
	var hdr strings.Builder
	hdr.WriteString("##fileformat=VCFv4.2\n##contig=<ID=1,length=2000000000>\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT")
	for i := 0; i < 200; i++ {
		fmt.Fprintf(&hdr, "\tgoat_%d", i)
	}
	hdr.WriteString("\n")
	if !put(hdr.String()) {
		return n
	}
	gts := [4]string{"\t0/0", "\t0/1", "\t1/1", "\t./."}
	var line strings.Builder
	for r := 0; ; r++ {
		select {
		case <-stop:
			return n
		default:
		}
		line.Reset()
		fmt.Fprintf(&line, "1\t%d\t.\tA\tG\t.\tPASS\t.\tGT", 100+r*100)
		for i := 0; i < 200; i++ {
			line.WriteString(gts[(r*7+i*i)%4])
		}
		line.WriteString("\n")
		if !put(line.String()) {
			return n
		}
		if stall > 0 && n >= stall {
			w.Flush()
			<-stop
			return n
		}
	}
}

// TestKillChild is the child side of TestKillScan: it runs one command line
// the way main does, with SIGINT and SIGTERM cancelling the context.
func TestKillChild(t *testing.T) {
	a := os.Getenv("FGAUGE_KILL_ARGS")
	if a == "" {
		t.Skip("child process of TestKillScan")
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	args := strings.Split(a, "\n")
	code := run(ctx, &runEnv{stdout: os.Stdout, stderr: os.Stderr, stdin: os.Stdin, argv: append([]string{"fgauge"}, args...)}, args)
	stop()
	os.Exit(code)
}

// TestBadInputStdin feeds malformed input on standard input ("-") to a
// child process: the message names <stdin> and the line, the exit code is
// 2 and OUTDIR is left absent.
func TestBadInputStdin(t *testing.T) {
	for _, tc := range []struct{ file, msg string }{
		{"pos_negative.vcf", `fgauge: <stdin>:6: POS: malformed input: expected a non-negative integer position, found "-5"`},
		{"bgzf_flipped_crc.vcf.gz", "fgauge: <stdin> (virtual offset 6553600): BGZF block: checksum mismatch"},
		{"bcf_truncated_record.bcf", "fgauge: <stdin>: record 2"},
	} {
		t.Run(tc.file, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "out")
			args := []string{"scan", "-", "-o", out, "--no-progress"}
			cmd := exec.Command(os.Args[0], "-test.run=^TestKillChild$", "-test.count=1")
			cmd.Env = append(os.Environ(), "FGAUGE_KILL_ARGS="+strings.Join(args, "\n"))
			in, err := os.Open(filepath.Join(badDir, tc.file))
			if err != nil {
				t.Fatal(err)
			}
			defer in.Close()
			var stderr bytes.Buffer
			cmd.Stdin, cmd.Stdout, cmd.Stderr = in, &stderr, &stderr
			cmd.Run()
			if code := cmd.ProcessState.ExitCode(); code != exitBadInput || !strings.Contains(stderr.String(), tc.msg) {
				t.Errorf("exit %d, stderr:\n%s\nwant %d and %q", code, stderr.String(), exitBadInput, tc.msg)
			}
			if left := leftovers(t, out); left != nil {
				t.Errorf("left %v", left)
			}
		})
	}
}
