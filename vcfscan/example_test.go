package vcfscan_test

import (
	"bytes"
	"fmt"
	"io"
	"log"
	"strings"

	"fgauge/vcfscan"
)

// Three invented calves genotyped at three sites.
const herdVCF = `##fileformat=VCFv4.2
##contig=<ID=1,length=158534110>
#CHROM	POS	ID	REF	ALT	QUAL	FILTER	INFO	FORMAT	calf_a	calf_b	calf_c
1	1000	.	A	G	.	PASS	AF=0.5	GT	0/0	0/1	1/1
1	2000	.	AT	A	.	PASS	.	GT	0/0	0/1	1/1
1	3000	.	C	T	.	PASS	AF=0.17	GT	0|0	./.	0|1
`

func ExampleNewReader() {
	r, err := vcfscan.NewReader(strings.NewReader(herdVCF), "herd.vcf", vcfscan.Options{InfoKey: "AF"})
	if err != nil {
		log.Fatal(err)
	}
	defer r.Close()
	fmt.Println(r.Format(), r.Samples())
	for {
		b, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			log.Fatal(err)
		}
		for i, rec := range b.Records {
			fmt.Println(r.Header().Contigs[rec.ChromID].Name, rec.Pos, rec.InfoValue, b.Calls(i))
		}
		fmt.Println("skipped as indel:", b.Skipped[vcfscan.SkipIndel])
		r.Release(b)
	}
	// Output:
	// vcf [calf_a calf_b calf_c]
	// 1 1000 0.5 [0 1 2]
	// 1 3000 0.17 [0 3 1]
	// skipped as indel: 1
}

func ExampleOpen() {
	r, err := vcfscan.Open("../testdata/cohort189.vcf.gz", vcfscan.Options{
		IncludeFiltered: true,
		Samples:         []string{"101976-101976", "100920-100920"},
	})
	if err != nil {
		log.Fatal(err)
	}
	defer r.Close()
	var kept, read int64
	for {
		b, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			log.Fatal(err)
		}
		kept += int64(len(b.Records))
		read += b.Read
		r.Release(b)
	}
	// 99 biallelic SNPs, as in testdata/expected/cohort189.sites.tsv (cyvcf2).
	fmt.Println(r.Format(), len(r.Samples()), "samples,", kept, "of", read, "records kept")
	// Output:
	// vcf.bgzf 2 samples, 99 of 115 records kept
}

func ExampleNewBGZFWriter() {
	var buf bytes.Buffer
	w := vcfscan.NewBGZFWriter(&buf, 6)
	fmt.Fprint(w, herdVCF)
	if err := w.Close(); err != nil {
		log.Fatal(err)
	}
	r, err := vcfscan.NewReader(&buf, "herd.vcf.gz", vcfscan.Options{})
	if err != nil {
		log.Fatal(err)
	}
	defer r.Close()
	fmt.Println(r.Format(), len(r.Warnings()), "warnings")
	// Output:
	// vcf.bgzf 0 warnings
}
