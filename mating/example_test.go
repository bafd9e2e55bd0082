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

func ExampleSegmentPacker() {
	// A buck and a doe sharing one genome copy along a whole chromosome:
	// never opposite homozygotes, both heterozygous here and there.
	var b strings.Builder
	b.WriteString("##fileformat=VCFv4.2\n##contig=<ID=1,length=20000000>\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tbuck\tdoe\n")
	buck := []string{"0/1", "0/0", "1/1", "0/1", "0/0"}
	doe := []string{"0/0", "0/0", "0/1", "1/1", "0/1"}
	for k := 0; k < 200; k++ {
		fmt.Fprintf(&b, "1\t%d\t.\tA\tG\t.\tPASS\t.\tGT\t%s\t%s\n", k*100_000+1, buck[k%5], doe[k%5])
	}
	r, err := vcfscan.NewReader(strings.NewReader(b.String()), "pair.vcf", vcfscan.Options{})
	if err != nil {
		log.Fatal(err)
	}
	defer r.Close()
	p := mating.NewSegmentPacker([]int{0}, []int{1})
	for {
		batch, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			log.Fatal(err)
		}
		p.Add(batch)
		r.Release(batch)
	}
	m, err := p.SharedSegments(context.Background(), 1, mating.SegmentOptions{})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("shared-segment coancestry %.2f over %d sites\n", m.At(0, 0), p.Sites())
	// Output: shared-segment coancestry 0.25 over 200 sites
}
