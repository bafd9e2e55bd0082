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
		{s, "n_hom_ref", "selected samples called homozygous reference (diploid); on non-PAR X rows females only (males are in n_male_ref); n_het and n_hom_alt likewise"},
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
		{s, "hwe_p", "two-sided Hardy-Weinberg p: exact test summing outcomes at most as probable as the observed (relative tolerance 1e-7 for ties) (Wigginton, Cutler & Abecasis 2005, Am J Hum Genet 76:887); with --hwe-method chisq the 1-df chi-square p; NA when monomorphic or no calls. On non-PAR X rows (hwe_midp and the one-sided p's too): the exact X-chromosomal test, jointly of Hardy-Weinberg proportions in females and equal allele frequencies in the two sexes (Graffelman & Weir 2016, Heredity 116:558), over samples of given sex, else inferred sex, whatever --hwe-method; alt_freq, call_rate, het_observed, het_expected and f_site there count X chromosomes (males one) and females' heterozygosity. Non-PAR Y and MT rows: calls counted as haploid, no heterozygosity and no test (NA)"},
		{s, "hwe_midp", "mid-p: hwe_p - P(observed)/2 (Graffelman & Moreno 2013, Stat Appl Genet Mol Biol 12:433); NA with --hwe-method chisq"},
		{s, "hwe_p_fewer_het", "one-sided p against fewer heterozygotes than Hardy-Weinberg expects: P(n_het <= observed) given the allele counts; chisq method: normal approximation P(Z >= z), z = sign(f)*sqrt(X^2)"},
		{s, "hwe_p_more_het", "one-sided p against more heterozygotes than Hardy-Weinberg expects: P(n_het >= observed) given the allele counts; chisq method: normal approximation P(Z <= z)"},
		{s, "alt_freq_lik", "alternate-allele frequency by EM from the genotype likelihoods (PL/GL) of every sample, Hardy-Weinberg prior, tolerance 1e-12 (Kim et al. 2011, BMC Bioinformatics 12:231; Li 2011, Bioinformatics 27:2987); NA when the record has no likelihoods, with --no-likelihood-f, and on non-PAR X, Y and MT rows. When present, het_expected and f_site use it (n = samples with informative likelihoods) instead of alt_freq; the hard-call counts, Ho and the HWE tests do not change"},
		{s, "n_male_ref", "non-PAR X rows: males' calls of the reference allele (haploid 0 or diploid 0/0: hemizygous whatever the coding); NA on other rows. The four male columns are present when the input header declares an X contig and, for an indexed input, the index holds records on it"},
		{s, "n_male_alt", "non-PAR X rows: males' calls of the alternate allele (1 or 1/1); NA on other rows"},
		{s, "n_male_het_error", "non-PAR X rows: males' heterozygous calls, genotyping errors set to missing (counted in n_missing); NA on other rows"},
		{s, "n_sex_unknown", "non-PAR X rows: calls of samples of unknown sex (neither given nor inferred), left out of the X test; NA on other rows"},

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
		{sm, "call_rate", "sites_called plus n_haploid, over kept sites: a haploid call counts as a call here, though only diploid calls enter the statistics. Non-PAR X, Y and MT sites are left out of this and every column before the sex columns (x_sites_called counts X calls)"},
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
		{sm, "sex_given", "sex given by --sex or the pedigree's sex column (male, female, unknown); only when a sex was given and the data have non-PAR X or Y sites"},
		{sm, "sex_inferred", "sex inferred from the genotypes (male, female, unknown when the evidence is ambiguous or too thin); the sex columns appear when the data have non-PAR X or Y sites (heterozygosity-based sex check, Anderson et al. 2010, Nat Protoc 5:1564; thresholds in scan --help and run.json)"},
		{sm, "sex_evidence", "why sex_inferred says what it says: x_hemizygous, x_diploid, x_ambiguous, too_few_x_sites, y_only, or a pattern fitting neither sex (x_het_excess, x_intermediate, x_diploid_with_y, x_hemizygous_without_y)"},
		{sm, "x_sites_called", "calls (diploid or haploid) at non-PAR X sites"},
		{sm, "x_f", "X inbreeding coefficient F_X = 1 - observed/expected heterozygous calls over non-PAR X sites with cohort MAF >= the sex check's minimum (method of moments): near 1 for a male (hemizygous, haploid or diploid coding alike); for a female, an estimate of her X-linked inbreeding; NA without such calls"},
		{sm, "x_f_se", "approximate standard error of x_f under Hardy-Weinberg proportions, sqrt(sum 2pq(1-2pq)) / sum 2pq"},
		{sm, "y_call_ratio", "call rate at non-PAR Y sites divided by the call rate at non-PAR X sites (about 1 with a Y, about 0 without); NA without Y sites"},
		{sm, "x_male_het_errors", "for a sample tested as male on X (given sex, else inferred): heterozygous calls at non-PAR X sites, genotyping errors set to missing in the X tests; NA for other samples"},
		{sm, "flags", "comma-separated warnings, '.' when none: no_calls (no diploid call), low_call_rate (call_rate below --min-call-rate), het_rate_outlier (het_rate more than 3 SD from the cohort mean; possible contamination, sample mix-up or a different population), estimators_disagree (f_hom > 0.1 while f_uniting_gametes < 0 or the reverse: look at frequencies and data quality before reading either), sex_mismatch (given and inferred sex both known and different: a data-quality signal, often a sample mix-up), sex_fits_neither (the X, and Y, pattern fits neither sex: possible contamination or a sex-chromosome anomaly, which only a licensed laboratory can confirm)"},

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
