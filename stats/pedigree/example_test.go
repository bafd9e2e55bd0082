package pedigree_test

import (
	"fmt"
	"strings"

	"fgauge/stats/pedigree"
)

func ExampleRead() {
	// A buck mated to his own daughter.
	const table = "id\tsire\tdam\n" +
		"HILL-002\tHILL-001\tHILL-010\n" +
		"HILL-003\tHILL-001\tHILL-002\n"
	p, err := pedigree.Read(strings.NewReader(table), "herd.tsv")
	if err != nil {
		fmt.Println(err)
		return
	}
	f := p.Inbreeding()
	for i := 0; i < p.Len(); i++ {
		fmt.Println(p.ID(i), f[i])
	}
	// Output:
	// HILL-001 0
	// HILL-010 0
	// HILL-002 0
	// HILL-003 0.25
}

func ExamplePedigree_Coancestry() {
	const table = "s\t0\t0\nd\t0\t0\nb\ts\td\ng\ts\td\n"
	p, _ := pedigree.Read(strings.NewReader(table), "sibs.tsv")
	b, _ := p.Index("b")
	g, _ := p.Index("g")
	c, _ := p.Coancestry([][2]int{{b, g}, {b, b}}, nil)
	fmt.Println(c)
	// Output: [0.25 0.5]
}
