package roh_test

import (
	"fmt"
	"os"
	"strings"

	"fgauge/roh"
	"fgauge/vcfscan"
)

// A made-up calf typed at 400 sites, one every 25 kb on chromosome 1,
// homozygous from 2 Mb to 7 Mb and cycling 0/0, 0/1, 1/1 outside. The two
// homozygous calls just before 2 Mb (1.95 and 1.975 Mb) are part of the
// stretch as far as any detector can tell. The rule-based detector would
// tolerate the heterozygous call at 1.925 Mb, but not so close to the
// run's end (see Rules.EdgeHomSites), so it stops at 1.95 Mb too.
func calfBatch() (*vcfscan.Batch, []float64) {
	b := &vcfscan.Batch{NSamples: 1}
	var freqs []float64
	for i := 0; i < 400; i++ {
		pos := int64(i+1) * 25_000
		g := vcfscan.Geno(i % 3) // 0/0, 0/1, 1/1, ...
		if pos >= 2_000_000 && pos < 7_000_000 {
			g = vcfscan.Geno(2 * (i % 2))
		}
		b.Records = append(b.Records, vcfscan.Record{ChromID: 0, Pos: pos})
		b.GT = append(b.GT, g)
		freqs = append(freqs, 0.5)
	}
	return b, freqs
}

func ExampleNewCollector() {
	cfg := roh.DefaultConfig() // HMM detector
	c, err := roh.NewCollector(cfg, []string{"calf_07"}, []vcfscan.Contig{{Name: "1", Length: 10_000_000}})
	if err != nil {
		panic(err)
	}
	b, freqs := calfBatch()
	if err := c.AddBatch(b, freqs); err != nil {
		panic(err)
	}
	res, err := c.Finish()
	if err != nil {
		panic(err)
	}
	for _, run := range res.Chroms[0].Runs {
		fmt.Println(run.Start, run.End, run.NHet)
	}
	// Output:
	// 1950000 7000000 0
}

func ExampleResult_SampleTable() {
	c, _ := roh.NewCollector(roh.DefaultConfig(), []string{"calf_07"}, []vcfscan.Contig{{Name: "1", Length: 10_000_000}})
	b, freqs := calfBatch()
	c.AddBatch(b, freqs)
	res, _ := c.Finish()
	h, rows := res.SampleTable()
	fmt.Println(strings.Join(h, "\t"))
	fmt.Println(strings.Join(rows[0], "\t"))
	// Output:
	// n_runs	roh_total_bp	f_roh	f_roh_gt_1mb	f_roh_gt_2mb	f_roh_gt_4mb	f_roh_gt_8mb	f_roh_gt_16mb	f_within_2g	f_within_4g	f_within_8g	f_within_16g	f_within_32g	f_within_64g	f_within_128g	f_within_256g
	// 1	5050001	0.5050001	0.5050001	0.5050001	0.5050001	0	0	0.04753231618794203	0.138920941898489	0.28877951396132706	0.4332045155975819	0.488547709530288	0.4985918632857084	0.5019271318630933	0.5041899540709496
}

func ExampleResult_WriteRuns() {
	cfg := roh.DefaultConfig()
	cfg.Method = roh.MethodRules
	c, _ := roh.NewCollector(cfg, []string{"calf_07"}, []vcfscan.Contig{{Name: "1", Length: 10_000_000}})
	b, freqs := calfBatch()
	c.AddBatch(b, freqs)
	res, _ := c.Finish()
	res.WriteRuns(os.Stdout)
	// Output:
	// sample	chrom	start	end	length_bp	length_cm	n_sites	n_het	n_missing	mean_posterior_autozygous	generations_back	age_class_generations	age_class_posterior
	// calf_07	1	1950000	7000000	5050001	5.05	203	0	0	NA	9.900990099009901	NA	NA
}

func ExampleResult_Summary() {
	c, _ := roh.NewCollector(roh.DefaultConfig(), []string{"calf_07"}, []vcfscan.Contig{{Name: "1", Length: 10_000_000}})
	b, freqs := calfBatch()
	c.AddBatch(b, freqs)
	res, _ := c.Finish()
	s := res.Summary()
	fmt.Println(s.Method, s.CoveredBP, s.CoveredSource, s.AutosomesUsed, s.ClassColumns()[0])
	// Output:
	// hmm 10000000 contig_lengths [1] f_roh_gt_1mb
}

// Results of disjoint chromosomes (for example two shards of one input)
// merge into the result of one pass.
func ExampleResult_Merge() {
	contigs := []vcfscan.Contig{{Name: "1", Length: 10_000_000}, {Name: "2", Length: 10_000_000}}
	shard := func(chrom int) *roh.Result {
		c, _ := roh.NewCollector(roh.DefaultConfig(), []string{"calf_07"}, contigs)
		b, freqs := calfBatch()
		for i := range b.Records {
			b.Records[i].ChromID = chrom
		}
		c.AddBatch(b, freqs)
		r, _ := c.Finish()
		return r
	}
	all := shard(0)
	if err := all.Merge(shard(1)); err != nil {
		panic(err)
	}
	_, rows := all.SampleTable()
	fmt.Println(len(all.Chroms), rows[0][0], rows[0][2])
	// Output:
	// 2 2 0.5050001
}

func ExampleColumnDocs() {
	for _, d := range roh.ColumnDocs()[:3] {
		fmt.Printf("%s %s: %s\n", d.File, d.Column, d.Meaning)
	}
	// Output:
	// runs.tsv sample: sample name
	// runs.tsv chrom: chromosome (autosomes only)
	// runs.tsv start: position of the run's first site (1-based)
}

func ExampleSpecies() {
	p, _ := roh.Species("cattle")
	fmt.Println(len(p.Autosomes), p.Autosomes[0], p.Autosomes[28], p.CMPerMB)
	// Output:
	// 29 1 29 1
}

func ExampleClassColumn() {
	fmt.Println(roh.ClassColumn(1), roh.ClassColumn(0.5))
	// Output:
	// f_roh_gt_1mb f_roh_gt_0p5mb
}

func ExampleConfig_Validate() {
	cfg := roh.DefaultConfig()
	cfg.Species = "sheep"
	cfg.Classes = []float64{4, 1, 2}
	if err := cfg.Validate(); err != nil {
		panic(err)
	}
	fmt.Println(cfg.CMPerMB, cfg.Classes)
	// Output:
	// 1.2 [1 2 4]
}
