package genmap_test

import (
	"fmt"
	"strings"

	"fgauge/genmap"
)

// A map naming "chr1" answers for chromosome "1"; positions between map
// points are interpolated linearly.
func ExampleRead() {
	m, err := genmap.Read(strings.NewReader("chrom pos cm\nchr1 1000000 1.0\nchr1 3000000 5.0\n"), "map.txt")
	if err != nil {
		panic(err)
	}
	fmt.Println(m.Chrom("1").At(2_000_000, 1.0))
	fmt.Println(m.Chrom("1").PosAt(3.0, 1.0))
	// Output:
	// 3
	// 2e+06
}
