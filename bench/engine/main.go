// Command engine reads a VCF/BCF with the vcfscan engine alone and counts
// genotype codes, so bench/run can separate the engine's cost from the
// statistics' cost.
package main

import (
	"flag"
	"fmt"
	"io"
	"os"
	"runtime/pprof"

	"fgauge/vcfscan"
)

func main() {
	threads := flag.Int("threads", 0, "worker threads (0: all cores)")
	cpuProfile := flag.String("cpu-profile", "", "write a Go CPU profile to this file")
	flag.Parse()
	if *cpuProfile != "" {
		f, err := os.Create(*cpuProfile)
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(2)
		}
		if err := pprof.StartCPUProfile(f); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(2)
		}
		defer f.Close()
		defer pprof.StopCPUProfile()
	}
	rd, err := vcfscan.Open(flag.Arg(0), vcfscan.Options{Threads: *threads})
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(2)
	}
	defer rd.Close()
	var counts [6]int64
	var sites int64
	for {
		b, err := rd.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			pprof.StopCPUProfile()
			os.Exit(2)
		}
		countCodes(&counts, b.GT)
		sites += int64(len(b.Records))
		rd.Release(b)
	}
	fmt.Println(sites, counts)
}

// countCodes adds the codes of gt to counts. Four interleaved tables keep
// runs of equal codes (the usual case) from waiting on each other's
// increments, so that the engine's consumer costs little next to it.
func countCodes(counts *[6]int64, gt []vcfscan.Geno) {
	var c [4][8]int64
	i := 0
	for ; i+4 <= len(gt); i += 4 {
		q := gt[i : i+4 : i+4]
		c[0][q[0]&7]++
		c[1][q[1]&7]++
		c[2][q[2]&7]++
		c[3][q[3]&7]++
	}
	for _, g := range gt[i:] {
		c[0][g&7]++
	}
	for k := range counts {
		counts[k] += c[0][k] + c[1][k] + c[2][k] + c[3][k]
	}
}
