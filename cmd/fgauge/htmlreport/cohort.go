package htmlreport

import (
	"math"
	"sort"
)

// cohort is the per-sample view of the tables used by all figures.
type cohort struct {
	d         *data
	raw       []string // sample names as in samples.tsv (keys into runs)
	names     []string // the same, control characters made visible
	pops      []string // nil without a population column
	cols      map[string][]float64
	ests      []string // estimator columns present, f_roh first when present
	classes   []rohClass
	flags     [][]string
	highlight map[int]bool
	missing   []float64 // all NaN, returned for absent columns (read-only)
	unknown   []string  // --highlight names not in samples.tsv
}

func newCohort(d *data, highlight []string) *cohort {
	t := d.samples
	c := &cohort{d: d, cols: map[string][]float64{}, classes: parseClasses(t.header, &d.info), highlight: map[int]bool{}}
	n := len(t.rows)
	c.names = make([]string, n)
	c.raw = make([]string, n)
	c.flags = make([][]string, n)
	for r := range t.rows {
		c.raw[r] = t.str(r, "sample")
		c.names[r] = visible(c.raw[r])
		c.flags[r] = splitFlags(t.str(r, "flags"))
	}
	if t.has("population") {
		c.pops = make([]string, n)
		for r := range t.rows {
			c.pops[r] = visible(t.str(r, "population"))
		}
	}
	for _, h := range t.header {
		if h == "sample" || h == "population" || h == "flags" {
			continue
		}
		v := make([]float64, n)
		for r := range t.rows {
			v[r] = t.num(r, h)
		}
		c.cols[h] = v
	}
	c.missing = make([]float64, n)
	for i := range c.missing {
		c.missing[i] = math.NaN()
	}
	for _, e := range estimatorCols {
		if _, ok := c.cols[e]; ok {
			c.ests = append(c.ests, e)
		}
	}
	want := map[string]bool{}
	for _, h := range highlight {
		want[h] = true
	}
	found := map[string]bool{}
	for r, nm := range c.raw {
		if want[nm] {
			c.highlight[r] = true
			found[nm] = true
		}
	}
	for _, h := range highlight {
		if !found[h] {
			c.unknown = append(c.unknown, visible(h))
			found[h] = true // list each once
		}
	}
	return c
}

func (c *cohort) col(name string) []float64 {
	if v, ok := c.cols[name]; ok {
		return v
	}
	return c.missing
}

func (c *cohort) isFlagged(r int) bool { return len(c.flags[r]) > 0 }

// genomeLayout places contigs end to end on one axis (Mb).
type genomeLayout struct {
	names  []string
	offset map[string]float64
	length map[string]float64
	total  float64
}

// layout builds the genome axis from sites.tsv.gz extents, extended by
// runs.tsv ends; ROH-excluded contigs are left out when run.json names the
// autosomes used; with many contigs only those carrying runs and the
// largest are kept (at most 40).
func (c *cohort) layout() genomeLayout {
	ext := map[string]float64{}
	var order []string
	add := func(name string, end float64) {
		if _, ok := ext[name]; !ok {
			order = append(order, name)
		}
		ext[name] = math.Max(ext[name], end)
	}
	for _, k := range c.d.sites.contigs {
		add(visible(k.name), float64(k.maxPos)/1e6)
	}
	hasRuns := map[string]bool{}
	names := append([]string(nil), c.raw...)
	sort.Strings(names)
	for _, nm := range names {
		for _, r := range c.d.runs[nm] {
			add(visible(r.chrom), float64(r.end)/1e6)
			hasRuns[visible(r.chrom)] = true
		}
	}
	if used := c.d.info.ROH.AutosomesUsed; len(used) > 0 {
		u := map[string]bool{}
		for _, a := range used {
			u[a] = true
		}
		var kept []string
		for _, k := range order {
			if u[k] || hasRuns[k] {
				kept = append(kept, k)
			}
		}
		order = kept
	}
	if len(order) > 40 {
		idx := append([]string(nil), order...)
		sort.SliceStable(idx, func(a, b int) bool {
			if hasRuns[idx[a]] != hasRuns[idx[b]] {
				return hasRuns[idx[a]]
			}
			return ext[idx[a]] > ext[idx[b]]
		})
		keep := map[string]bool{}
		for _, k := range idx[:40] {
			keep[k] = true
		}
		var kept []string
		for _, k := range order {
			if keep[k] {
				kept = append(kept, k)
			}
		}
		order = kept
	}
	g := genomeLayout{offset: map[string]float64{}, length: map[string]float64{}}
	for _, k := range order {
		g.names = append(g.names, k)
		g.offset[k] = g.total
		g.length[k] = ext[k]
		g.total += ext[k]
	}
	return g
}

// classOf returns the length band index of a run: the number of classes
// it is at least as long as (the rule of the f_roh_gt_* columns).
func (c *cohort) classOf(lengthBP float64) int {
	mb := lengthBP / 1e6
	k := 0
	for _, cl := range c.classes {
		if mb >= cl.MinMb {
			k++
		}
	}
	return k
}
