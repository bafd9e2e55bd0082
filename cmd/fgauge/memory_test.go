package main

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"fgauge/cmd/fgauge/internal/runsummary"
)

// readMemory reads run.json's memory section.
func readMemory(t *testing.T, out string) *runsummary.Memory {
	t.Helper()
	r, err := runsummary.Read(filepath.Join(out, "run.json"))
	if err != nil {
		t.Fatal(err)
	}
	if r.Memory == nil {
		t.Fatalf("%s/run.json has no memory section", out)
	}
	return r.Memory
}

func sameTables(t *testing.T, what, a, b string) {
	t.Helper()
	for _, name := range []string{"samples.tsv", "runs.tsv"} {
		x, err := os.ReadFile(filepath.Join(a, name))
		if err != nil {
			t.Fatal(err)
		}
		y, err := os.ReadFile(filepath.Join(b, name))
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(x, y) {
			t.Errorf("%s: %s differs from the in-memory scan (%d vs %d bytes)", what, name, len(x), len(y))
		}
	}
}

// TestMemoryBudgetIdentity: samples.tsv and runs.tsv are byte-identical
// between the in-memory path (a budget larger than the data), the budgeted
// path with a tiny budget (every window of sites goes to temporary disk)
// and shard+merge with that tiny budget (pieces of split chromosomes in
// side files, joined within the budget), on the gene-drop simulated truth
// files (whose truth the simulator controls), with and without genotype
// likelihoods. The temporary folder is empty afterwards.
func TestMemoryBudgetIdentity(t *testing.T) {
	dir := t.TempDir()
	inputs := map[string]string{
		"gt": simulatedInput(t, dir),
		"pl": simulatedInputDepth(t, dir, "herds_reads.vcf.gz", 6),
	}
	for name, in := range inputs {
		t.Run(name, func(t *testing.T) {
			d := filepath.Join(dir, name)
			tmp := filepath.Join(d, "tmp")
			if err := os.MkdirAll(tmp, 0o755); err != nil {
				t.Fatal(err)
			}
			big := filepath.Join(d, "in_memory")
			if code, _, e := runCmdline(t, "scan", in, "-o", big, "--no-progress", "--threads", "2", "--memory-budget", "1G"); code != exitOK {
				t.Fatalf("exit %d: %s", code, e)
			}
			if m := readMemory(t, big); m.SpilledBytes != 0 || m.BudgetBytes != 1<<30 || m.PeakHeldBytes <= 0 || m.PeakRSSBytes <= 0 {
				t.Errorf("in-memory run.json memory = %+v, want nothing spilled, budget 1 GiB, something held, a peak RSS", *m)
			}
			runs, _ := os.ReadFile(filepath.Join(big, "runs.tsv"))
			if n := bytes.Count(runs, []byte("\n")); n < 20 {
				t.Fatalf("only %d lines in runs.tsv: the comparison would be weak", n)
			}
			for _, threads := range []string{"1", "2"} {
				small := filepath.Join(d, "spilled_"+threads)
				if code, _, e := runCmdline(t, "scan", in, "-o", small, "--no-progress", "--threads", threads,
					"--memory-budget", "1K", "--temp-dir", tmp); code != exitOK {
					t.Fatalf("exit %d: %s", code, e)
				}
				m := readMemory(t, small)
				if m.SpilledBytes <= 0 || m.BudgetBytes != 1024 || m.TempDir != tmp {
					t.Errorf("tiny budget: run.json memory = %+v, want bytes spilled to %s", *m, tmp)
				}
				sameTables(t, "budget 1K, threads "+threads, big, small)
			}
			merged := scanShards(t, d, in, []string{"--memory-budget", "1K", "--temp-dir", tmp}, shardSplit{"split", [][]string{
				{"1:1-11000000"}, {"1:11000001-", "2:1-9000000"}, {"2:9000001-", "3"}}}, "--memory-budget", "1K", "--temp-dir", tmp)
			sameTables(t, "shard+merge, budget 1K", big, merged)
			if m := readMemory(t, merged); m.SpilledBytes <= 0 {
				t.Errorf("merge with a tiny budget spilled nothing: %+v", *m)
			}
			if left, _ := os.ReadDir(tmp); len(left) != 0 {
				t.Errorf("temporary folder holds %d entries afterwards", len(left))
			}
		})
	}
}

// TestTempDirUnusable: a missing, unwritable or full temporary folder
// stops the scan (or the merge) with exit status 2, a message naming the
// folder, and no output folder left behind.
func TestTempDirUnusable(t *testing.T) {
	dir := t.TempDir()
	in := simulatedInput(t, dir)
	missing := filepath.Join(dir, "no_such_folder")
	notDir := writeTestInput(t, dir, "a_file", "x")
	cases := map[string]string{"missing": missing, "not a folder": notDir}
	if ro := readOnlyDir(t, dir); ro != "" {
		cases["unwritable"] = ro
	}
	if full := fullDir(t, dir); full != "" {
		cases["full"] = full
	}
	for name, tmp := range cases {
		t.Run(name, func(t *testing.T) {
			out := filepath.Join(dir, "out_"+strings.ReplaceAll(name, " ", "_"))
			code, _, e := runCmdline(t, "scan", in, "-o", out, "--no-progress", "--memory-budget", "1K", "--temp-dir", tmp)
			if code != exitBadInput || !strings.Contains(e, tmp) || !strings.Contains(e, "temporary") {
				t.Errorf("exit %d, stderr %q; want %d and a message naming %s", code, e, exitBadInput, tmp)
			}
			if left := leftovers(t, out); left != nil {
				t.Errorf("OUTDIR holds %v", left)
			}
		})
	}
}

// readOnlyDir returns a folder no file can be created in, or "" (test
// skipped in part) where none can be made: a read-only tmpfs when running
// as root (root ignores permission bits), else a folder of mode 0500.
func readOnlyDir(t *testing.T, dir string) string {
	p := filepath.Join(dir, "read_only")
	if err := os.Mkdir(p, 0o755); err != nil {
		t.Fatal(err)
	}
	if os.Geteuid() != 0 {
		os.Chmod(p, 0o500)
		t.Cleanup(func() { os.Chmod(p, 0o755) })
		return p
	}
	if err := exec.Command("mount", "-t", "tmpfs", "-o", "ro,size=64k", "tmpfs", p).Run(); err != nil {
		t.Logf("no read-only folder (mount: %v): the unwritable case is not tested", err)
		return ""
	}
	t.Cleanup(func() { exec.Command("umount", p).Run() })
	return p
}

// fullDir returns a folder on a 64 kB tmpfs (root only; "" otherwise).
func fullDir(t *testing.T, dir string) string {
	p := filepath.Join(dir, "full")
	if err := os.Mkdir(p, 0o755); err != nil {
		t.Fatal(err)
	}
	if os.Geteuid() != 0 {
		t.Logf("not root: the disk-full case is left to roh's unit test")
		return ""
	}
	if err := exec.Command("mount", "-t", "tmpfs", "-o", "size=64k", "tmpfs", p).Run(); err != nil {
		t.Logf("no small tmpfs (mount: %v): the disk-full case is left to roh's unit test", err)
		return ""
	}
	t.Cleanup(func() { exec.Command("umount", p).Run() })
	return p
}

// TestInterruptDuringSpill runs a scan with a tiny budget in a child
// process, waits until it holds an (unlinked) temporary file in the
// temporary folder, interrupts it with SIGINT, and checks that it exits
// 130, leaves the temporary folder empty and OUTDIR absent.
func TestInterruptDuringSpill(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "cohort.vcf")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("no named pipes here: %v", err)
	}
	tmp := filepath.Join(dir, "tmp")
	if err := os.Mkdir(tmp, 0o755); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	args := []string{"scan", fifo, "-o", out, "--no-progress", "--threads", "2", "--memory-budget", "1K", "--temp-dir", tmp}
	cmd := exec.Command(os.Args[0], "-test.run=^TestKillChild$", "-test.count=1")
	cmd.Env = append(os.Environ(), "FGAUGE_KILL_ARGS="+strings.Join(args, "\n"))
	var stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stderr, &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	stop := make(chan struct{})
	written := make(chan int64, 1)
	go func() { written <- feedCohort(fifo, 0, stop) }()
	deadline := time.Now().Add(60 * time.Second)
	// twice 50 ms apart: a spill file, not the short-lived probe of the
	// folder made at the start
	for !holdsFileIn(cmd.Process.Pid, tmp) || !func() bool { time.Sleep(50 * time.Millisecond); return holdsFileIn(cmd.Process.Pid, tmp) }() {
		if time.Now().After(deadline) {
			cmd.Process.Kill()
			cmd.Wait()
			close(stop)
			t.Fatalf("no temporary file open in %s after 60 s; child said:\n%s", tmp, stderr.String())
		}
		time.Sleep(10 * time.Millisecond)
	}
	if err := cmd.Process.Signal(syscall.SIGINT); err != nil {
		t.Fatal(err)
	}
	done := make(chan error, 1)
	go func() { done <- cmd.Wait() }()
	select {
	case <-done:
	case <-time.After(30 * time.Second):
		cmd.Process.Kill()
		<-done
		t.Fatalf("child still running 30 s after SIGINT; it said:\n%s", stderr.String())
	}
	close(stop)
	<-written
	if code := cmd.ProcessState.ExitCode(); code != exitInterrupted {
		t.Errorf("exit code %d, want %d; stderr:\n%s", code, exitInterrupted, stderr.String())
	}
	if left, _ := os.ReadDir(tmp); len(left) != 0 {
		t.Errorf("temporary folder holds %v after the interrupt", left)
	}
	if left := leftovers(t, out); left != nil {
		t.Errorf("OUTDIR holds %v after the interrupt", left)
	}
}

// holdsFileIn reports whether process pid has an unlinked file of folder
// dir open (Linux /proc shows it as "PATH (deleted)").
func holdsFileIn(pid int, dir string) bool {
	fds, err := os.ReadDir(filepath.Join("/proc", strconv.Itoa(pid), "fd"))
	if err != nil {
		return false
	}
	for _, fd := range fds {
		l, err := os.Readlink(filepath.Join("/proc", strconv.Itoa(pid), "fd", fd.Name()))
		if err == nil && strings.HasPrefix(l, dir+string(filepath.Separator)) && strings.HasSuffix(l, "(deleted)") {
			return true
		}
	}
	return false
}
