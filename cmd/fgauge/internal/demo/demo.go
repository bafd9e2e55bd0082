// Package demo is the built-in demonstration: an invented cooperative of
// four goat herds (herd book, simulated genomes), scanned through the
// scanrun API, its youngest generation's matings planned through the mate
// API, and summarised in plain language. Everything in it is
// invented: no real animals, farms or people.
package demo

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"

	"fgauge/cmd/fgauge/htmlreport"
	"fgauge/cmd/fgauge/internal/scanrun"
	"fgauge/genedrop"
	"fgauge/internal/numfmt"
	"fgauge/roh"
	"fgauge/stats"
	"fgauge/stats/pedigree"
	"fgauge/vcfscan"
)

// demoSeed fixes the demo's data.
const demoSeed = 20260417

// Config says where the demo writes and what it reports in run.json.
type Config struct {
	Dir         string // output folder, created if needed
	Threads     int    // scan workers (at least 1)
	Version     string // fgauge version, for run.json
	CommandLine []string
	Stdout      io.Writer // the plain-language summary
	Stderr      io.Writer // the scan's warnings and closing line
}

// Run simulates the demo cohort into cfg.Dir, scans it with every
// statistic, runs of homozygosity and the pedigree comparison on, writes
// the report with one page per animal, plans next season's matings of the
// youngest generation into cfg.Dir/mate (mate.Run), and prints a summary
// to cfg.Stdout.
func Run(ctx context.Context, cfg Config) error {
	dir := &cfg.Dir
	if err := os.MkdirAll(*dir, 0o755); err != nil {
		return err
	}
	recs, herdOf := demoHerdBook()
	ped, err := pedigree.FromRecords(recs, "demo herd book")
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	res, err := genedrop.Run(genedrop.Config{
		Seed: demoSeed,
		Chromosomes: []genedrop.Chromosome{
			{Name: "1", LengthBP: 150_000_000, LengthCM: 140},
			{Name: "2", LengthBP: 135_000_000, LengthCM: 125},
			{Name: "3", LengthBP: 120_000_000, LengthCM: 112},
			{Name: "4", LengthBP: 118_000_000, LengthCM: 108},
			{Name: "5", LengthBP: 105_000_000, LengthCM: 100},
		},
		SiteSpacing:         35_000,
		MinMAF:              0.02,
		AncestralHaplotypes: 24, // a small heritage breed: founders share old segments
		AncestralSegmentCM:  1,
		Pedigree:            ped,
		GenotypeError:       0.002,
		MissingRate:         0.01,
	})
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	vcfPath := filepath.Join(*dir, "cohort.vcf.gz")
	pedPath := filepath.Join(*dir, "pedigree.tsv")
	popPath := filepath.Join(*dir, "herds.tsv")
	if err := genedrop.WriteVCFBGZF(vcfPath, res); err != nil {
		return fmt.Errorf("demo: writing %s: %w", vcfPath, err)
	}
	files := []struct {
		name string
		fn   func(io.Writer) error
	}{
		{"pedigree.tsv", func(w io.Writer) error { return genedrop.WritePedigree(w, res) }},
		{"truth_samples.tsv", func(w io.Writer) error { return genedrop.WriteSamplesTruth(w, res) }},
		{"truth_segments.tsv", func(w io.Writer) error { return genedrop.WriteSegmentsTruth(w, res) }},
		{"herds.tsv", func(w io.Writer) error {
			bw := bufio.NewWriter(w)
			bw.WriteString("sample\tpopulation\n")
			for _, s := range res.Samples {
				fmt.Fprintf(bw, "%s\t%s\n", s.ID, herdOf[s.ID])
			}
			return bw.Flush()
		}},
	}
	for _, f := range files {
		p := filepath.Join(*dir, f.name)
		if err := writeFile(p, f.fn); err != nil {
			return fmt.Errorf("demo: writing %s: %w", p, err)
		}
	}
	fmt.Fprintf(cfg.Stdout, "Demo cohort: %d goats in 4 herds, %d SNPs on 5 chromosomes, written to %s\n",
		len(res.Samples), countSites(res), *dir)

	scanDir := filepath.Join(*dir, "scan")
	scanErr := scan(ctx, &cfg, vcfPath, scanDir, popPath, pedPath)
	if err := ctx.Err(); err != nil {
		return err
	}
	fpedOf := map[string]float64{}
	truthOf := map[string]float64{}
	for _, s := range res.Samples {
		fpedOf[s.ID] = s.FPedigree
		truthOf[s.ID] = s.FRealized
	}
	var genomic map[string]float64
	var genomicCol string
	if scanErr == nil {
		genomic, genomicCol, err = readGenomicF(filepath.Join(scanDir, "samples.tsv"))
		if err != nil {
			fmt.Fprintf(cfg.Stdout, "\n(The scan ran but its samples table could not be read: %v)\n", err)
		}
	} else {
		fmt.Fprintf(cfg.Stdout, "\nThe scan step did not run (%v); the summary below uses pedigree F only.\n", scanErr)
	}
	writeDemoSummary(cfg.Stdout, ped, fpedOf, truthOf, genomic, genomicCol, scanDir, scanErr == nil)
	mateDir := filepath.Join(*dir, "mate")
	plan, mateErr := matingStep(ctx, &cfg, vcfPath, mateDir, ped)
	if err := ctx.Err(); err != nil {
		return err
	}
	if mateErr == nil {
		writeMatingSummary(cfg.Stdout, plan, mateDir)
	} else {
		fmt.Fprintf(cfg.Stdout, "\nThe mating step did not run (%v).\n", mateErr)
	}
	if scanErr != nil {
		return fmt.Errorf("demo: the scan or report step failed: %w", scanErr)
	}
	if mateErr != nil {
		return fmt.Errorf("demo: the mating step failed: %w", mateErr)
	}
	return nil
}

func countSites(res *genedrop.Result) int {
	n := 0
	for c := range res.Chromosomes {
		n += res.NumSites(c)
	}
	return n
}

// demoHerdBook writes the invented herd book: four herds, one popular AI
// buck, four planned close-kin matings, otherwise matings between animals
// with coancestry below 1/32.
func demoHerdBook() ([]pedigree.Record, map[string]string) {
	rng := rand.New(rand.NewPCG(demoSeed, 1))
	herds := []string{"HILL", "BROOK", "FERN", "STONE"}
	herdOf := map[string]string{}
	var recs []pedigree.Record
	next := map[string]int{}
	add := func(herd, sire, dam string, sex pedigree.Sex) string {
		next[herd]++
		id := fmt.Sprintf("%s-%03d", herd, next[herd])
		recs = append(recs, pedigree.Record{ID: id, Sire: sire, Dam: dam, Sex: sex})
		herdOf[id] = herd
		return id
	}
	sexOf := func(k int) pedigree.Sex {
		if k%2 == 0 {
			return pedigree.SexMale
		}
		return pedigree.SexFemale
	}
	type herdAnimals struct{ bucks, does []string }
	h := map[string]*herdAnimals{}
	// Founders: two bucks and eight does per herd.
	for _, hd := range herds {
		a := &herdAnimals{}
		for k := 0; k < 2; k++ {
			a.bucks = append(a.bucks, add(hd, "", "", pedigree.SexMale))
		}
		for k := 0; k < 8; k++ {
			a.does = append(a.does, add(hd, "", "", pedigree.SexFemale))
		}
		h[hd] = a
	}
	popular := "FERN-001"
	// Generation 1: one kid per founder doe from the herd's own bucks; at
	// Brookend and Fernlea the first doe has twins, a buck and a doe.
	gen1 := map[string]*herdAnimals{}
	for _, hd := range herds {
		a := &herdAnimals{}
		for k, d := range h[hd].does {
			s := h[hd].bucks[k%2]
			kid := add(hd, s, d, sexOf(k))
			if sexOf(k) == pedigree.SexMale {
				a.bucks = append(a.bucks, kid)
			} else {
				a.does = append(a.does, kid)
			}
			if (hd == "BROOK" || hd == "FERN") && k == 0 {
				a.does = append(a.does, add(hd, s, d, pedigree.SexFemale)) // twin sister
			}
		}
		gen1[hd] = a
	}
	kin := func(a, b string) float64 {
		p, err := pedigree.FromRecords(recs, "demo")
		if err != nil {
			panic(err) // the herd book is built here and has no loops
		}
		i, _ := p.Index(a)
		j, _ := p.Index(b)
		c, _ := p.Coancestry([][2]int{{i, j}}, nil)
		return c[0]
	}
	// pick returns a mate from pool that is not closely related to partner.
	pick := func(pool []string, partner string) string {
		for try := 0; try < 50; try++ {
			m := pool[rng.IntN(len(pool))]
			if kin(m, partner) < 1.0/32 {
				return m
			}
		}
		return pool[0]
	}
	// Generation 2: ten kids per herd; half by the popular buck (AI), half
	// by a generation-1 buck borrowed from the next herd.
	gen2 := map[string]*herdAnimals{}
	var cousinBuck, cousinDoe string
	for i, hd := range herds {
		a := &herdAnimals{}
		dams := append(append([]string{}, h[hd].does...), gen1[hd].does...)
		other := herds[(i+1)%len(herds)]
		for k := 0; k < 10; k++ {
			var sire, dam string
			sex := sexOf(k / 2)
			switch {
			case hd == "BROOK" && k == 1:
				// Full-sib mating: the twins, brother and sister.
				sire, dam = gen1[hd].bucks[0], gen1[hd].does[0]
			case hd == "STONE" && k == 1:
				// Sire-daughter mating: STONE-002 with a daughter of his.
				sire, dam = h[hd].bucks[1], gen1[hd].does[0]
			case hd == "FERN" && k == 1:
				// The Fernlea twins each breed with unrelated mates; their
				// kids are first cousins (mated in generation 3).
				sire, dam, sex = gen1[hd].bucks[0], h[hd].does[2], pedigree.SexMale
			case hd == "FERN" && k == 3:
				sire, dam, sex = gen1[other].bucks[0], gen1[hd].does[0], pedigree.SexFemale
			case k%2 == 0:
				sire = popular
				dam = pick(dams, sire)
			default:
				sire = gen1[other].bucks[rng.IntN(len(gen1[other].bucks))]
				dam = pick(dams, sire)
			}
			kid := add(hd, sire, dam, sex)
			if hd == "FERN" && k == 1 {
				cousinBuck = kid
			}
			if hd == "FERN" && k == 3 {
				cousinDoe = kid
			}
			if sex == pedigree.SexMale {
				a.bucks = append(a.bucks, kid)
			} else {
				a.does = append(a.does, kid)
			}
		}
		gen2[hd] = a
	}
	// Generation 3: eight kids per herd by unrelated matings, plus a
	// half-sib mating at Hillside (two offspring of the popular buck) and a
	// first-cousin mating at Fernlea.
	for i, hd := range herds {
		dams := append(append([]string{}, gen2[hd].does...), gen1[hd].does...)
		for k := 0; k < 8; k++ {
			var sire, dam string
			switch {
			case hd == "HILL" && k < 2:
				sire = firstWithSire(recs, gen2[hd].bucks, popular)
				dam = firstWithSire(recs, gen2[hd].does, popular)
			case hd == "FERN" && k == 0:
				sire, dam = cousinBuck, cousinDoe
			default:
				other := herds[(i+2)%len(herds)]
				sire = pick(gen2[other].bucks, gen2[hd].does[0])
				dam = pick(dams, sire)
			}
			if sire == "" || dam == "" {
				other := herds[(i+2)%len(herds)]
				sire = gen2[other].bucks[0]
				dam = pick(dams, sire)
			}
			add(hd, sire, dam, sexOf(k))
		}
	}
	return recs, herdOf
}

func parentsOf(recs []pedigree.Record, id string) (string, string) {
	for _, r := range recs {
		if r.ID == id {
			return r.Sire, r.Dam
		}
	}
	return "", ""
}

// firstWithSire returns the first animal of ids whose sire is sire.
func firstWithSire(recs []pedigree.Record, ids []string, sire string) string {
	for _, id := range ids {
		if s, _ := parentsOf(recs, id); s == sire {
			return id
		}
	}
	return ""
}

// readGenomicF reads sample and the first genomic F column present
// (f_roh, then f_grm, then f_hom) from a scan's samples.tsv.
func readGenomicF(path string) (map[string]float64, string, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, "", err
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 64*1024), 1<<24)
	if !sc.Scan() {
		return nil, "", fmt.Errorf("%s: empty", path)
	}
	head := strings.Split(sc.Text(), "\t")
	col, name := -1, ""
	for _, want := range []string{"f_roh", "f_grm", "f_hom"} {
		for i, h := range head {
			if h == want {
				col, name = i, want
				break
			}
		}
		if col >= 0 {
			break
		}
	}
	if col < 0 || head[0] != "sample" {
		return nil, "", fmt.Errorf("%s: no sample or genomic F column", path)
	}
	out := map[string]float64{}
	for sc.Scan() {
		fields := strings.Split(sc.Text(), "\t")
		if len(fields) <= col {
			continue
		}
		if v, err := strconv.ParseFloat(fields[col], 64); err == nil {
			out[fields[0]] = v
		}
	}
	return out, name, sc.Err()
}

// describeMating names the relationship between an animal's parents.
func describeMating(p *pedigree.Pedigree, i int) string {
	s, d := p.Sire(i), p.Dam(i)
	if s < 0 || d < 0 {
		return "a parent is unrecorded"
	}
	name := func(j int) string { return p.ID(j) }
	switch {
	case p.Sire(d) == s:
		return fmt.Sprintf("sire %s mated to his own daughter %s", name(s), name(d))
	case p.Dam(s) == d:
		return fmt.Sprintf("dam %s mated to her own son %s", name(d), name(s))
	case p.Sire(s) >= 0 && p.Sire(s) == p.Sire(d) && p.Dam(s) >= 0 && p.Dam(s) == p.Dam(d):
		return fmt.Sprintf("full-sib mating (%s x %s)", name(s), name(d))
	case p.Sire(s) >= 0 && p.Sire(s) == p.Sire(d):
		return fmt.Sprintf("half-sib mating: both parents by %s", name(p.Sire(s)))
	case p.Dam(s) >= 0 && p.Dam(s) == p.Dam(d):
		return fmt.Sprintf("half-sib mating: both parents out of %s", name(p.Dam(s)))
	}
	full := func(a, b int) bool {
		return a >= 0 && b >= 0 && a != b && p.Sire(a) >= 0 && p.Sire(a) == p.Sire(b) && p.Dam(a) >= 0 && p.Dam(a) == p.Dam(b)
	}
	for _, x := range []int{p.Sire(s), p.Dam(s)} {
		for _, y := range []int{p.Sire(d), p.Dam(d)} {
			if full(x, y) {
				return fmt.Sprintf("first-cousin mating (%s x %s; their parents %s and %s are full sibs)", name(s), name(d), name(x), name(y))
			}
		}
	}
	c, _ := p.Coancestry([][2]int{{s, d}}, nil)
	return fmt.Sprintf("related parents %s x %s (coancestry %.3f, e.g. cousins)", name(s), name(d), c[0])
}

// writeDemoSummary prints the plain-language summary of the demo. truth
// holds the simulated autozygous share, which only a simulation knows.
func writeDemoSummary(w io.Writer, ped *pedigree.Pedigree, fped, truth, genomic map[string]float64, col, scanDir string, scanned bool) {
	type row struct {
		id       string
		g, f, r  float64
		hasG     bool
		pedIndex int
	}
	var rows []row
	for i := 0; i < ped.Len(); i++ {
		id := ped.ID(i)
		g, ok := genomic[id]
		rows = append(rows, row{id: id, g: g, f: fped[id], r: truth[id], hasG: ok, pedIndex: i})
	}
	key := func(r row) float64 {
		if r.hasG {
			return r.g
		}
		return r.f
	}
	sort.SliceStable(rows, func(a, b int) bool { return key(rows[a]) > key(rows[b]) })
	by := "pedigree F"
	if len(genomic) > 0 {
		by = "genomic " + col
	}
	why := func(r row) string {
		if r.f > 0 {
			return describeMating(ped, r.pedIndex)
		}
		return "no recorded kinship between its parents"
	}
	header := func() {
		fmt.Fprintf(w, "  %-10s %8s %9s %10s  %s\n", "animal", "genomic", "pedigree", "simulated", "mating (from the herd book)")
	}
	line := func(r row) {
		g := numfmt.NA
		if r.hasG {
			g = strconv.FormatFloat(r.g, 'f', 3, 64)
		}
		fmt.Fprintf(w, "  %-10s %8s %9.3f %10.3f  %s\n", r.id, g, r.f, r.r, why(r))
	}
	fmt.Fprintf(w, "\nMost inbred animals (by %s):\n", by)
	header()
	for k, r := range rows {
		if k == 6 || key(r) <= 0 {
			break
		}
		line(r)
	}
	fmt.Fprintln(w, "\nEvery close-kin mating in the herd book (pedigree F above 0):")
	header()
	var gap row
	gapSize := -1.0
	for _, r := range rows {
		if r.f > 0 {
			line(r)
			if d := math.Abs(key(r) - r.f); r.hasG && d > gapSize {
				gap, gapSize = r, d
			}
		}
	}
	fmt.Fprintln(w, "  (simulated = the true autozygous share, known here only because the genomes were simulated)")
	if gapSize > 0.05 {
		fmt.Fprintf(w, "\nPedigree F is an expectation; single animals scatter around it by chance (Mendelian sampling).\n")
		fmt.Fprintf(w, "%s shows it: pedigree %.3f, genomic %.3f, simulated truth %.3f.\n", gap.id, gap.f, gap.g, gap.r)
	}
	fmt.Fprintln(w, "\nWhere to look next:")
	if scanned {
		fmt.Fprintf(w, "  - %s/runs.tsv lists each animal's runs of homozygosity; long runs (over 8 Mb) point to a\n", scanDir)
		fmt.Fprintln(w, "    common ancestor a few generations back, short ones to old shared ancestry of the breed.")
		fmt.Fprintf(w, "  - Compare the genomic and pedigree columns in %s/samples.tsv: large gaps in many animals\n", scanDir)
		fmt.Fprintln(w, "    hint at recording errors or relatedness the herd book does not show.")
		fmt.Fprintf(w, "  - %s/populations.tsv compares the herds; %s/report.html shows it all in a browser.\n", scanDir, scanDir)
		fmt.Fprintf(w, "  - %s/samples/index.html links one printable page per animal.\n", scanDir)
	} else {
		fmt.Fprintln(w, "  - Run 'fgauge scan' on cohort.vcf.gz with --populations herds.tsv and --pedigree pedigree.tsv")
		fmt.Fprintln(w, "    to see genomic F and runs of homozygosity next to the pedigree values.")
	}
	fmt.Fprintln(w, "  - truth_segments.tsv holds the simulated autozygous stretches, to check runs against.")
	fmt.Fprintln(w, "  - FERN-001 sired kids in every herd, so many young animals are related: the mating plan below")
	fmt.Fprintln(w, "    pairs them on their genomic coancestry ('fgauge mate'); 'fgauge pedigree --pairs' gives the")
	fmt.Fprintln(w, "    pedigree coancestry of any listed pairs.")
	fmt.Fprintln(w, "\nCaution: genomic or pedigree F is not a decision by itself; mating and culling decisions follow")
	fmt.Fprintln(w, "the breeding programme's rules, veterinary advice and local regulations.")
}

// scan runs the scan of the demo cohort with the scan command's defaults
// plus --populations and --pedigree.
func scan(ctx context.Context, cfg *Config, vcfPath, scanDir, popPath, pedPath string) error {
	start := time.Now()
	f, err := os.Open(pedPath)
	if err != nil {
		return err
	}
	ped, err := pedigree.Read(f, pedPath)
	f.Close()
	if err != nil {
		return err
	}
	pf, err := os.Open(popPath)
	if err != nil {
		return err
	}
	pops, err := stats.ReadPopulations(pf, popPath)
	pf.Close()
	if err != nil {
		return err
	}
	rohCfg := roh.DefaultConfig()
	if err := rohCfg.Validate(); err != nil {
		return err
	}
	threads := max(cfg.Threads, 1)
	res, err := scanrun.Run(ctx, scanrun.Config{
		Input: vcfPath, Out: scanDir, Force: true, Threads: threads,
		Read:     vcfscan.Options{Limits: scanrun.DefaultLimits()},
		Stats:    scanrun.StatsSettings{HWEMethod: "exact", Populations: pops, PopulationsFile: popPath, MinCallRate: 0.9, JackknifeBlockMB: 5},
		ROH:      rohCfg,
		Pedigree: ped,
		// The cohort report plus one printable page per animal, written
		// while the scan still holds the folder.
		AfterCommit: func(out string) error { return htmlreport.Write(out, htmlreport.Options{PerSample: true}) },
		Version:     cfg.Version, CommandLine: cfg.CommandLine, Stderr: cfg.Stderr,
	})
	if err != nil {
		return err
	}
	res.Report(cfg.Stderr, scanDir, time.Since(start))
	return nil
}

// writeFile creates path and fills it with fn.
func writeFile(path string, fn func(io.Writer) error) (err error) {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := f.Close(); err == nil {
			err = cerr
		}
	}()
	return fn(f)
}
