// Command gen writes a deterministic synthetic multi-sample VCF for the
// speed and memory benchmarks in bench/run. Allele frequencies follow a
// U-shaped spectrum; each sample carries a few long homozygous stretches so
// the ROH detector has work to do. The data are invented and only for timing.
package main

import (
	"bufio"
	"flag"
	"fmt"
	"math/rand/v2"
	"os"
)

func main() {
	samples := flag.Int("samples", 1000, "number of samples")
	sites := flag.Int("sites", 100000, "number of sites")
	chroms := flag.Int("chroms", 2, "number of chromosomes the sites are spread over")
	spacing := flag.Int("spacing", 1000, "bp between sites")
	seed := flag.Uint64("seed", 1, "random seed")
	flag.Parse()
	rng := rand.New(rand.NewPCG(*seed, 7))
	w := bufio.NewWriterSize(os.Stdout, 1<<20)
	defer w.Flush()
	perChrom := (*sites + *chroms - 1) / *chroms
	fmt.Fprintln(w, "##fileformat=VCFv4.2")
	for c := 1; c <= *chroms; c++ {
		fmt.Fprintf(w, "##contig=<ID=%d,length=%d>\n", c, perChrom**spacing+*spacing)
	}
	fmt.Fprintln(w, `##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">`)
	fmt.Fprint(w, "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT")
	for s := 0; s < *samples; s++ {
		fmt.Fprintf(w, "\tANIMAL%05d", s)
	}
	fmt.Fprintln(w)
	// Each sample has an autozygous stretch state that switches rarely.
	auto := make([]bool, *samples)
	bases := []byte("ACGT")
	line := make([]byte, 0, 4**samples+64)
	for i := 0; i < *sites; i++ {
		c := i/perChrom + 1
		pos := (i%perChrom + 1) * *spacing
		// U-shaped frequency spectrum: Beta(0.5, 0.5)-like.
		u := rng.Float64()
		p := 0.5 - 0.5*cosApprox(u)
		r := rng.IntN(4)
		ref, alt := bases[r], bases[(r+1+rng.IntN(3))%4]
		line = line[:0]
		line = fmt.Appendf(line, "%d\t%d\t.\t%c\t%c\t50\tPASS\t.\tGT", c, pos, ref, alt)
		for s := 0; s < *samples; s++ {
			// Enter a stretch about every 5,000 sites, leave after about 1,000.
			if (!auto[s] && rng.IntN(5000) == 0) || (auto[s] && rng.IntN(1000) == 0) {
				auto[s] = !auto[s]
			}
			a := rng.Float64() < p
			b := rng.Float64() < p
			if auto[s] {
				b = a
			}
			line = append(line, '\t')
			switch {
			case rng.IntN(200) == 0:
				line = append(line, ".|."...)
			default:
				line = append(line, '0'+btoi(a), '|', '0'+btoi(b))
			}
		}
		line = append(line, '\n')
		w.Write(line)
	}
}

func btoi(b bool) byte {
	if b {
		return 1
	}
	return 0
}

// cosApprox maps u in [0,1] to cos(pi*u) closely enough for a U shape.
func cosApprox(u float64) float64 {
	x := 2*u - 1 // -1..1
	return -x * (1.5 - 0.5*x*x)
}
