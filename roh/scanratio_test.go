package roh

import (
	"bytes"
	"fmt"
	"io"
	"math/rand/v2"
	"testing"
	"time"

	"fgauge/vcfscan"
)

// synthVCF writes an invented plain-text VCF of nSamples animals and
// nSites sites over two chromosomes, one site per 5 kb, with a planted
// homozygous stretch per animal (only for timing).
func synthVCF(nSamples, nSites int) []byte {
	rng := rand.New(rand.NewPCG(3, 3))
	var w bytes.Buffer
	per := nSites / 2
	w.WriteString("##fileformat=VCFv4.2\n")
	for c := 1; c <= 2; c++ {
		fmt.Fprintf(&w, "##contig=<ID=%d,length=%d>\n", c, per*5000+5000)
	}
	w.WriteString("##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype\">\n")
	w.WriteString("#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT")
	for s := 0; s < nSamples; s++ {
		fmt.Fprintf(&w, "\tANIMAL%05d", s)
	}
	w.WriteByte('\n')
	gts := [...]string{"0/0", "0/1", "1/1"}
	for i := 0; i < nSites; i++ {
		c, k := 1+i/per, i%per
		fmt.Fprintf(&w, "%d\t%d\t.\tA\tG\t.\tPASS\t.\tGT", c, (k+1)*5000)
		p := 0.05 + 0.9*rng.Float64()
		for s := 0; s < nSamples; s++ {
			g := hwe(rng, p)
			if (k+s*37)%4000 < 400 {
				g = vcfscan.Geno(2 * rng.IntN(2))
			}
			w.WriteByte('\t')
			w.WriteString(gts[g])
		}
		w.WriteByte('\n')
	}
	return w.Bytes()
}

// BenchmarkScanRatio times reading a 1,000-sample VCF (plain text, so the
// floor is parsing alone, without decompression) with and without ROH
// detection in the same run, and reports the ratio of the extra time to
// the read time, in wall time ("roh_extra_x"; the target is at most 0.5)
// and in CPU time ("roh_extra_cpu_x", steadier on a shared machine).
func BenchmarkScanRatio(b *testing.B) {
	const ns, nsites = 1000, 20000
	data := synthVCF(ns, nsites)
	read := func(withROH bool, method string) {
		r, err := vcfscan.NewReader(bytes.NewReader(data), "synthetic.vcf", vcfscan.Options{})
		if err != nil {
			b.Fatal(err)
		}
		var c *Collector
		if withROH {
			cfg := DefaultConfig()
			cfg.Method = method
			cfg.Threads = 2
			c, err = NewCollector(cfg, r.Samples(), r.Header().Contigs)
			if err != nil {
				b.Fatal(err)
			}
		}
		for {
			bt, err := r.Next()
			if err == io.EOF {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
			if c != nil {
				if err := c.AddBatch(bt, nil); err != nil {
					b.Fatal(err)
				}
			}
			r.Release(bt)
		}
		if c != nil {
			if _, err := c.Finish(); err != nil {
				b.Fatal(err)
			}
		}
	}
	for _, method := range []string{MethodHMM, MethodRules} {
		b.Run(method, func(b *testing.B) {
			var base, with, cbase, cwith float64
			for it := 0; it < b.N; it++ {
				t0, c0 := testingNow(), cpuSeconds()
				read(false, "")
				t1, c1 := testingNow(), cpuSeconds()
				read(true, method)
				t2, c2 := testingNow(), cpuSeconds()
				base += t1 - t0
				with += t2 - t1
				cbase += c1 - c0
				cwith += c2 - c1
			}
			b.ReportMetric(base/float64(b.N), "read_s")
			b.ReportMetric(with/float64(b.N), "read_roh_s")
			b.ReportMetric((with-base)/base, "roh_extra_x")
			b.ReportMetric((cwith-cbase)/cbase, "roh_extra_cpu_x")
		})
	}
}

func testingNow() float64 { return float64(time.Now().UnixNano()) / 1e9 }
