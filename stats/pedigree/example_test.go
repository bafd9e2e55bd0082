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

func ExampleFromRecords() {
	// Two generations of full-sib mating (F = 3/8).
	recs := []pedigree.Record{
		{ID: "b1", Sire: "s", Dam: "d"}, {ID: "g1", Sire: "s", Dam: "d"},
		{ID: "b2", Sire: "b1", Dam: "g1"}, {ID: "g2", Sire: "b1", Dam: "g1"},
		{ID: "x", Sire: "b2", Dam: "g2"},
	}
	p, err := pedigree.FromRecords(recs, "in memory")
	if err != nil {
		fmt.Println(err)
		return
	}
	i, _ := p.Index("x")
	fmt.Println(p.Inbreeding()[i])
	// Output: 0.375
}

func ExamplePedigree_ReadPairs() {
	p, _ := pedigree.Read(strings.NewReader("s\t0\t0\nd\t0\t0\nb\ts\td\n"), "trio.tsv")
	pairs, err := p.ReadPairs(strings.NewReader("id_a\tid_b\ns\tb\ns\td\n"), "pairs.tsv")
	if err != nil {
		fmt.Println(err)
		return
	}
	c, _ := p.Coancestry(pairs, nil)
	fmt.Println(c)
	// Output: [0.25 0]
}
