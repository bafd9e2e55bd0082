package stats

import (
	"slices"
	"strings"
)

// ColumnDoc explains one output column in one line.
type ColumnDoc struct {
	File, Column, Meaning string
}

// The output files of this package.
const (
	FileSites       = "sites.tsv.gz"
	FilePopSites    = "sites_by_population.tsv.gz"
	FileSamples     = "samples.tsv"
	FilePopulations = "populations.tsv"
	FilePairwise    = "populations_pairwise.tsv"
)

// ColumnDocs lists every column this package produces, in file order,
// with the estimator's citation where one applies. The tables' header
// lines are built from the same list, so a column and its explanation
// are declared once.
func ColumnDocs() []ColumnDoc { return append([]ColumnDoc(nil), columns...) }

// headerLine returns the tab-joined names of file's columns, leaving out skip.
func headerLine(file string, skip ...string) string {
	var names []string
	for _, d := range columns {
		if d.File == file && !slices.Contains(skip, d.Column) {
			names = append(names, d.Column)
		}
	}
	return strings.Join(names, "\t")
}

var columns = func() []ColumnDoc {
	const s, ps, sm, po, pw = FileSites, FilePopSites, FileSamples, FilePopulations, FilePairwise
	return []ColumnDoc{
		{s, "chrom", "chromosome name"},
		{s, "pos", "1-based position"},
		{s, "ref", "reference allele"},
		{s, "alt", "alternate allele"},
		{s, "n_hom_ref", "selected samples called homozygous reference (diploid)"},
		{s, "n_het", "selected samples called heterozygous (diploid)"},
		{s, "n_hom_alt", "selected samples called homozygous alternate (diploid)"},
		{s, "n_missing", "selected samples with a missing or masked call (any allele missing)"},
		{s, "n_haploid", "selected samples with a haploid call (left out of every diploid statistic)"},
		{s, "alt_freq", "alternate-allele frequency among the diploid calls; NA without calls"},
		{s, "maf", "minor-allele frequency, min(alt_freq, 1 - alt_freq)"},
		{s, "call_rate", "called samples (diploid or haploid call) / selected samples"},
		{s, "het_observed", "observed heterozygosity Ho = n_het / diploid calls"},
		{s, "het_expected", "expected heterozygosity 2n/(2n-1)*2pq, Nei's small-sample correction (Nei 1978, Genetics 89:583)"},
		{s, "f_site", "1 - Ho/He; NA when He is 0 (monomorphic) or no calls"},
		{s, "hwe_p", "two-sided Hardy-Weinberg p: exact test summing outcomes at most as probable as the observed (relative tolerance 1e-7 for ties) (Wigginton, Cutler & Abecasis 2005, Am J Hum Genet 76:887); with --hwe-method chisq the 1-df chi-square p; NA when monomorphic or no calls"},
		{s, "hwe_midp", "mid-p: hwe_p - P(observed)/2 (Graffelman & Moreno 2013, Stat Appl Genet Mol Biol 12:433); NA with --hwe-method chisq"},
		{s, "hwe_p_fewer_het", "one-sided p against fewer heterozygotes than Hardy-Weinberg expects: P(n_het <= observed) given the allele counts; chisq method: normal approximation P(Z >= z), z = sign(f)*sqrt(X^2)"},
		{s, "hwe_p_more_het", "one-sided p against more heterozygotes than Hardy-Weinberg expects: P(n_het >= observed) given the allele counts; chisq method: normal approximation P(Z <= z)"},
		{s, "alt_freq_lik", "alternate-allele frequency by EM from the genotype likelihoods (PL/GL) of every sample, Hardy-Weinberg prior, tolerance 1e-12 (Kim et al. 2011, BMC Bioinformatics 12:231; Li 2011, Bioinformatics 27:2987); NA when the record has no likelihoods or --no-likelihood-f. When present, het_expected and f_site use it (n = samples with informative likelihoods) instead of alt_freq; the hard-call counts, Ho and the HWE tests do not change"},

		{ps, "chrom", "chromosome name"},
		{ps, "pos", "1-based position"},
		{ps, "population", "population name from --populations"},
		{ps, "n_called", "diploid calls in the population"},
		{ps, "het_observed", "observed heterozygosity in the population"},
		{ps, "het_expected", "expected heterozygosity in the population, Nei (1978) small-sample corrected"},
		{ps, "f_site", "1 - Ho/He in the population; NA when He is 0"},
		{ps, "hwe_p", "Hardy-Weinberg p in the population (method as for sites.tsv.gz)"},

		{sm, "sample", "sample name from the input header"},
		{sm, "population", "population from --populations; NA for samples not listed (they use cohort frequencies and are left out of population statistics)"},
		{sm, "sites_called", "kept sites with a diploid call"},
		{sm, "n_hom_ref", "homozygous-reference calls"},
		{sm, "n_het", "heterozygous calls"},
		{sm, "n_hom_alt", "homozygous-alternate calls"},
		{sm, "n_missing", "missing or masked calls"},
		{sm, "n_haploid", "haploid calls"},
		{sm, "call_rate", "sites_called plus n_haploid, over kept sites: a haploid call counts as a call here, though only diploid calls enter the statistics"},
		{sm, "het_rate", "n_het / sites_called"},
		{sm, "f_hom", "method-of-moments F (Li & Horvitz 1953, Am J Hum Genet 5:107): 1 minus the sample's heterozygous calls divided by the heterozygous calls Hardy-Weinberg predicts from the frequencies, both summed over polymorphic_sites_called; the prediction uses the sample-size corrected 2pq*2n/(2n-1)"},
		{sm, "f_grm", "Yang et al. F-hat-I: mean of (x-2p)^2/(2p(1-p)) - 1, the GRM diagonal minus 1 (Yang, Lee, Goddard & Visscher 2011, Am J Hum Genet 88:76)"},
		{sm, "f_excess_hom", "Yang et al. F-hat-II: mean of 1 - x(2-x)/(2p(1-p)), excess homozygosity (Yang et al. 2011)"},
		{sm, "f_uniting_gametes", "Yang et al. F-hat-III: mean of (x^2 - (1+2p)x + 2p^2)/(2p(1-p)), correlation of uniting gametes; smallest sampling variance near F = 0 (Yang et al. 2011)"},
		{sm, "f_vanraden", "VanRaden method 1 GRM diagonal minus 1, ratio of sums sum (x-2p)^2 / (2 sum p(1-p)) - 1 (VanRaden 2008, J Dairy Sci 91:4414)"},
		{sm, "polymorphic_sites_called", "diagnostic: sites polymorphic in the frequencies used (0 < p < 1) where the sample has a diploid call; every F column above averages or sums over these sites"},
		{sm, "homozygous_share", "diagnostic: share of the sample's calls at polymorphic_sites_called that are homozygous; NA without such sites"},
		{sm, "homozygous_share_under_hwe", "diagnostic: the homozygous share Hardy-Weinberg predicts at the same sites, mean of 1 - 2pq*2n/(2n-1) with n the called individuals behind p (factor 1 for --freqs/--freqs-from-info); f_hom is how far homozygous_share exceeds it, as a fraction of the distance from it to 1; NA without such sites"},
		{sm, "f_lik", "maximum-likelihood F from the genotype likelihoods (PL/GL), the EM of Vieira, Fumagalli, Albrechtsen & Nielsen 2013 (Genome Res 23:1852), kept in [0,1], at site frequencies chosen by --f-lik-freqs (default: the likelihood EM frequency, alt_freq_lik, per population with --populations; --freqs/--freqs-from-info frequencies when given); not biased by low depth as the hard-call estimators are; NA without likelihoods"},
		{sm, "f_lik_se", "asymptotic standard error of f_lik, 1/sqrt of the observed information; NA when f_lik is 0 or 1 or NA"},
		{sm, "depth_mean", "mean read depth per call: from FORMAT DP (missing DP left out) when the input has it, else implied by the likelihoods (the PL gap from the homozygous call to the heterozygote / 10 log10 2, a proxy that reads a few percent low); NA without either"},
		{sm, "depth_source", "where depth_mean comes from: dp (FORMAT DP) or pl (likelihoods); NA without either"},
		{sm, "flags", "comma-separated warnings, '.' when none: no_calls (no diploid call), low_call_rate (call_rate below --min-call-rate), het_rate_outlier (het_rate more than 3 SD from the cohort mean; possible contamination, sample mix-up or a different population), estimators_disagree (f_hom > 0.1 while f_uniting_gametes < 0 or the reverse: look at frequencies and data quality before reading either)"},

		{po, "population", "population name; the last row, all_pooled, is every sample assigned to a population"},
		{po, "n_samples", "samples assigned to the population"},
		{po, "mean_het_observed", "mean Ho over sites where the population has a diploid call"},
		{po, "mean_het_expected", "mean He (Nei 1978 corrected) over the same sites"},
		{po, "f_is", "population rows: 1 - sum Ho / sum He; all_pooled row: Weir & Cockerham f, genome-wide sum b / sum (b+c) (Weir & Cockerham 1984, Evolution 38:1358)"},
		{po, "share_hwe_p_below_1e6", "share of the group's tested sites with hwe_p < 1e-6"},
		{po, "f_is_se", "all_pooled: block jackknife SE of f; NA on population rows"},
		{po, "f_st", "all_pooled: Weir & Cockerham theta, sum a / sum (a+b+c) over sites; NA on population rows"},
		{po, "f_st_se", "all_pooled: delete-one block jackknife SE of theta; blocks are genomic windows of --jackknife-block-mb (window sums merge exactly by key across threads and shards, which blocks of K consecutive sites could not)"},
		{po, "f_it", "all_pooled: Weir & Cockerham F, sum (a+b) / sum (a+b+c); NA on population rows"},
		{po, "f_it_se", "all_pooled: block jackknife SE of F; NA on population rows"},

		{pw, "population_a", "first population of the pair (population-file order)"},
		{pw, "population_b", "second population of the pair"},
		{pw, "f_st", "Weir & Cockerham (1984) theta for the two populations, ratio of summed components"},
		{pw, "f_st_se", "delete-one block jackknife SE over genomic windows of --jackknife-block-mb"},
		{pw, "n_sites", "sites where both populations have calls and the pair is polymorphic"},
	}
}()
