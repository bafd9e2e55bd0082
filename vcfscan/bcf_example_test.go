package vcfscan_test

import (
	"fmt"
	"io"
	"log"

	"fgauge/vcfscan"
)

// Reading part of a BCF file through its CSI index. BCF and VCF input give
// the same batches; the format is detected from the content.
func ExampleOpen_region() {
	reg, err := vcfscan.ParseRegion("22:50,400,000-50,500,000")
	if err != nil {
		log.Fatal(err)
	}
	r, err := vcfscan.Open("../testdata/bcf/chr22_1000g.bcf", vcfscan.Options{Regions: []vcfscan.Region{reg}})
	if err != nil {
		log.Fatal(err)
	}
	defer r.Close()
	var first, last int64
	kept := 0
	for {
		b, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			log.Fatal(err)
		}
		for _, rec := range b.Records {
			if first == 0 {
				first = rec.Pos
			}
			last = rec.Pos
			kept++
		}
		r.Release(b)
	}
	// The same 1197 sites as testdata/expected/chr22_1000g.sites.tsv
	// (python3-cyvcf2) lists between these positions.
	fmt.Println(r.Format(), kept, "SNPs from", first, "to", last)
	// Output:
	// bcf.bgzf 1197 SNPs from 50414983 to 50500000
}
