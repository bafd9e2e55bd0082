package mating_test

import (
	"context"
	"fmt"
	"io"
	"log"
	"math"
	"strings"

	"fgauge/mating"
	"fgauge/vcfscan"
)

// Two invented bucks and three does of the goat cooperative, four SNPs.
const herd = `##fileformat=VCFv4.2
##contig=<ID=1,length=1000000>
#CHROM	POS	ID	REF	ALT	QUAL	FILTER	INFO	FORMAT	buck_a	buck_b	doe_1	doe_2	doe_3
1	100	.	A	G	.	PASS	.	GT	0/0	1/1	0/0	1/1	0/1
1	200	.	C	T	.	PASS	.	GT	0/1	0/0	0/1	0/0	1/1
1	300	.	G	A	.	PASS	.	GT	1/1	0/1	1/1	./.	0/0
1	400	.	T	C	.	PASS	.	GT	0/0	0/1	0/0	0/1	0/1
`

func ExamplePacker() {
	r, err := vcfscan.NewReader(strings.NewReader(herd), "herd.vcf", vcfscan.Options{})
	if err != nil {
		log.Fatal(err)
	}
	defer r.Close()
	p := mating.NewPacker([]int{0, 1}, []int{2, 3, 4}, nil) // cohort frequencies
	for {
		b, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			log.Fatal(err)
		}
		p.Add(b)
		r.Release(b)
	}
	m, err := p.Genomic(context.Background(), 1)
	if err != nil {
		log.Fatal(err)
	}
	for s := 0; s < m.Sires; s++ {
		for d := 0; d < m.Dams; d++ {
			fmt.Printf("%7.3f", m.At(s, d))
		}
		fmt.Println()
	}
	// buck_a x doe_1 by hand: z = (-1, 0.2, 0.75, -0.6) for both, sum z^2 =
	// 1.9625, 2 sum p(1-p) = 1.86875, G/2 = 1.9625 / (2 * 1.86875) = 0.525.

	// Output:
	//   0.525 -0.375 -0.251
	//  -0.425  0.482 -0.130
}

func ExampleAllocate() {
	cost := &mating.Matrix{Sires: 2, Dams: 3, V: []float64{
		0.05, 0.20, 0.10, // buck_a with doe_1, doe_2, doe_3
		0.10, 0.00, 0.12, // buck_b
	}}
	a, err := mating.Allocate(context.Background(), cost, mating.AllocOptions{Limits: []int{2, 1}, Ceiling: math.NaN()})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(a.SireOf, a.Total)
	// Output: [0 1 0] 0.15000000000000002
}
