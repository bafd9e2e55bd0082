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
		for _, g := range b.GT {
			counts[g]++
		}
		sites += int64(len(b.Records))
		rd.Release(b)
	}
	fmt.Println(sites, counts)
}
