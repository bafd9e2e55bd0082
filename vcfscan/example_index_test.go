package vcfscan_test

import (
	"fmt"
	"log"

	"fgauge/vcfscan"
)

// OpenIndex reads the index next to a data file; each reference with
// records carries its span of virtual offsets and its record count.
func ExampleOpenIndex() {
	idx, err := vcfscan.OpenIndex("../testdata/cohort189.vcf.gz", nil)
	if err != nil {
		log.Fatal(err)
	}
	for _, r := range idx.Refs {
		fmt.Println(r.Name, r.Records, r.HasStats)
	}
	// Output:
	// 1 115 true
}
