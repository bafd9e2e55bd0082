package vcfscan_test

import (
	"fmt"
	"io"
	"log"
	"os"
	"path/filepath"

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

// IndexBGZFTable writes a .tbi beside a finished BGZF table; OpenIndex
// reads it back.
func ExampleIndexBGZFTable() {
	dir, err := os.MkdirTemp("", "fgauge-example")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "sites.tsv.gz")
	f, err := os.Create(path)
	if err != nil {
		log.Fatal(err)
	}
	bw := vcfscan.NewBGZFWriter(f, 6)
	bw.Write([]byte("chrom\tpos\tf_site\n1\t1000\t0.1\n1\t2000\t-0.05\n2\t500\t0.2\n"))
	bw.Close()
	f.Close()
	if err := vcfscan.IndexBGZFTable(path, vcfscan.TabixSitesColumns); err != nil {
		log.Fatal(err)
	}
	idx, err := vcfscan.OpenIndex(path, nil)
	if err != nil {
		log.Fatal(err)
	}
	for _, r := range idx.Refs {
		fmt.Println(r.Name, r.Records)
	}
	// Output:
	// 1 2
	// 2 1
}

// OpenText reads a side file whether it is plain or compressed.
func ExampleOpenText() {
	r, err := vcfscan.OpenText("../testdata/bad/samples_list.txt")
	if err != nil {
		log.Fatal(err)
	}
	defer r.Close()
	b, _ := io.ReadAll(r)
	fmt.Print(string(b))
	// Output:
	// goat_a
	// goat_z
}
