package main

import (
	"bytes"
	"compress/gzip"
	"encoding/binary"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"testing"
	"time"
)

// indexLayout locates, in an uncompressed tabix or CSI index, the counts a
// damaged index lies about: the first reference's bin count, its first
// bin's chunk count and (tabix) its interval count. Layout from hts-specs,
// "The tabix index file format" and "Coordinate Sorted Index (CSI)
// format".
func indexLayout(t *testing.T, raw []byte) (nBin, nChunk, nIntv int) {
	t.Helper()
	le := binary.LittleEndian
	u32 := func(at int) int { return int(int32(le.Uint32(raw[at:]))) }
	var p int
	csi := bytes.HasPrefix(raw, []byte("CSI"))
	if csi {
		p = 16 + u32(12) + 4 // magic, min_shift, depth, l_aux, aux, n_ref
	} else {
		p = 4 + 4 + 24
		p += 4 + u32(p) // l_nm, names
	}
	nBin = p
	bins := u32(p)
	p += 4
	for b := 0; b < bins; b++ {
		if csi {
			p += 12 // bin, loffset
		} else {
			p += 4 // bin
		}
		if b == 0 {
			nChunk = p
		}
		p += 4 + 16*u32(p)
	}
	if !csi {
		nIntv = p
	}
	if bins == 0 {
		t.Fatal("test index has no bins on its first reference")
	}
	return nBin, nChunk, nIntv
}

// TestDamagedIndexRefused: every command that reads an index (plan, scan
// --region, and the shard scan whose recorded contig order merge uses)
// refuses a damaged or stale index with exit 2 and the index file named,
// even with the address space limited to 4 GB, where a decoder that
// trusted an absurd count would die of a runtime out-of-memory error.
// merge itself never opens the index: it is checked to give the same
// output after the index is damaged.
func TestDamagedIndexRefused(t *testing.T) {
	if testing.Short() {
		t.Skip("builds fgauge and runs it under a shell address-space limit")
	}
	sh, err := exec.LookPath("sh")
	if err != nil {
		t.Skip("sh not found: needed to run fgauge under 'ulimit -v'")
	}
	dir := t.TempDir()
	bin := filepath.Join(dir, "fgauge")
	goBin, err := exec.LookPath("go")
	if err != nil {
		goBin = filepath.Join(runtime.GOROOT(), "bin", "go")
	}
	if out, err := exec.Command(goBin, "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	run := func(args ...string) (int, string) {
		cmd := exec.Command(sh, append([]string{"-c", `ulimit -v 4000000; exec "$@"`, "sh", bin}, args...)...)
		var stderr bytes.Buffer
		cmd.Stderr = &stderr
		err := cmd.Run()
		code := 0
		if ee, ok := err.(*exec.ExitError); ok {
			code = ee.ExitCode()
		} else if err != nil {
			t.Fatal(err)
		}
		return code, stderr.String()
	}
	inputs := []struct {
		data, index, region string
	}{
		{"../../testdata/shard/boundary_indel.vcf.gz", ".tbi", "1"},
		{"../../testdata/annotated_small.bcf", ".csi", "chr1"},
	}
	for _, in := range inputs {
		zr, err := gzip.NewReader(mustOpen(t, in.data+in.index))
		if err != nil {
			t.Fatal(err)
		}
		good, err := io.ReadAll(zr)
		if err != nil {
			t.Fatal(err)
		}
		nBin, nChunk, nIntv := indexLayout(t, good)
		put := func(at int, v uint32) []byte {
			b := append([]byte(nil), good...)
			binary.LittleEndian.PutUint32(b[at:], v)
			return b
		}
		damages := map[string][]byte{
			"absurd_bin_count":   put(nBin, 0x7fffffff),
			"absurd_chunk_count": put(nChunk, 0x7fffffff),
			"truncated":          good[:len(good)*2/3],
			"wrong_magic":        append([]byte("XYZ\x01"), good[4:]...),
		}
		if nIntv > 0 {
			damages["absurd_interval_count"] = put(nIntv, 0x7fffffff)
		}
		damages["stale"] = good
		base := filepath.Base(in.data)
		for name, idx := range damages {
			t.Run(base+"/"+name, func(t *testing.T) {
				d := filepath.Join(t.TempDir(), name)
				if err := os.MkdirAll(d, 0o755); err != nil {
					t.Fatal(err)
				}
				data := filepath.Join(d, base)
				raw, err := os.ReadFile(in.data)
				if err != nil {
					t.Fatal(err)
				}
				if err := os.WriteFile(data, raw, 0o644); err != nil {
					t.Fatal(err)
				}
				idxPath := data + in.index
				if err := os.WriteFile(idxPath, idx, 0o644); err != nil {
					t.Fatal(err)
				}
				now := time.Now()
				dataTime, idxTime := now.Add(-time.Hour), now
				if name == "stale" {
					idxTime = now.Add(-2 * time.Hour)
				}
				if err := os.Chtimes(data, dataTime, dataTime); err != nil {
					t.Fatal(err)
				}
				if err := os.Chtimes(idxPath, idxTime, idxTime); err != nil {
					t.Fatal(err)
				}
				cmds := map[string][]string{
					"plan":        {"plan", data, "-o", filepath.Join(d, "plan")},
					"scan_region": {"scan", data, "--region", in.region, "-o", filepath.Join(d, "scan"), "--no-progress"},
					"shard_scan": {"scan", data, "--region", in.region, "-o", filepath.Join(d, "shard"), "--no-progress",
						"--state-out", filepath.Join(d, "shard.state")},
				}
				for cname, args := range cmds {
					code, stderr := run(args...)
					if code != exitBadInput || !strings.Contains(stderr, filepath.Base(idxPath)) ||
						strings.Contains(stderr, "fatal error") || strings.Contains(stderr, "panic") {
						t.Errorf("%s with a %s index: exit %d, want %d naming %s; stderr:\n%s",
							cname, name, code, exitBadInput, filepath.Base(idxPath), stderr)
					}
				}
			})
		}
	}
	// merge reads only the shard states (the contig order was taken
	// from the index by the shard scans): a damaged index afterwards
	// changes nothing.
	t.Run("merge_ignores_index", func(t *testing.T) {
		d := t.TempDir()
		data := filepath.Join(d, "in.vcf.gz")
		for _, f := range []struct{ from, to string }{{inputs[0].data, data}, {inputs[0].data + ".tbi", data + ".tbi"}} {
			raw, err := os.ReadFile(f.from)
			if err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(f.to, raw, 0o644); err != nil {
				t.Fatal(err)
			}
		}
		var states []string
		for i, reg := range []string{"1:1-1000", "1:1001-"} {
			st := filepath.Join(d, strconv.Itoa(i)+".state")
			if code, e := run("scan", data, "--region", reg, "-o", filepath.Join(d, "shard"+strconv.Itoa(i)), "--no-progress", "--state-out", st); code != 0 {
				t.Fatalf("shard scan %s: exit %d: %s", reg, code, e)
			}
			states = append(states, st)
		}
		merge := func(out string) []byte {
			if code, e := run(append([]string{"merge", "-o", out}, states...)...); code != 0 {
				t.Fatalf("merge: exit %d: %s", code, e)
			}
			b, err := os.ReadFile(filepath.Join(out, "samples.tsv"))
			if err != nil {
				t.Fatal(err)
			}
			return b
		}
		before := merge(filepath.Join(d, "m1"))
		if err := os.WriteFile(data+".tbi", []byte("XYZ\x01damaged"), 0o644); err != nil {
			t.Fatal(err)
		}
		if after := merge(filepath.Join(d, "m2")); !bytes.Equal(before, after) {
			t.Errorf("merge output changed after the index was damaged:\n%s\nvs\n%s", before, after)
		}
	})
}
