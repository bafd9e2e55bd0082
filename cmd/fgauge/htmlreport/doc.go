// Package htmlreport turns the output folder of `fgauge scan` into one
// self-contained HTML file (report.html) and, on request, one printable page
// plus a JSON twin per sample (samples/<name>.html, samples/<name>.json,
// samples/index.html).
//
// The report reads only the files the scan wrote (samples.tsv, runs.tsv,
// sites.tsv.gz, populations.tsv, populations_pairwise.tsv, run.json);
// everything but samples.tsv may be missing and unknown columns are ignored.
// Plots are drawn with gonum.org/v1/plot into SVG and embedded inline; pages
// are rendered with html/template so every sample, contig and population
// name is escaped, control and invisible format characters in names are
// shown as escapes (\x01, \u202e), and a Content-Security-Policy forbids
// scripts and any outside load. The pages reference nothing outside the
// output folder.
//
// Each figure element carries data-plot (its id), data-points (data marks
// drawn: points, bars, bins, cells or runs) and data-total (marks in the
// data), and the headline numbers carry data-headline and data-value with
// the exact value, so tests and scripts can check a page against the
// tables. Large cohorts are subsampled or grouped (at most 2,000 points per
// scatter panel, 300 bars, 30 painted samples, 200 table rows) and the page
// says what was left out.
//
// Per-sample file names keep ASCII letters, digits, '-', '_' and '.', turn
// everything else into '_', never contain "..", and get -2, -3, ... when two
// names would collide (case-insensitively), in samples.tsv order.
// samples/.pages lists the pages of the last run; the next run removes
// those it no longer writes, so the folder always matches its index.
//
// The JSON twin of a sample page has: sample, population (when known),
// page, values (every numeric column of the sample's row; null for NA),
// percentile_in_cohort and percentile_in_population (mid-rank percentiles
// of each F estimator), flags ([{flag, meaning}]), longest_runs ([{chrom,
// start, end, length_bp, length_cm, n_sites, generations_back}], longest
// first), cohort_size, population_size and cautions.
//
// The package computes no statistics of its own beyond summaries of the
// tables (medians, shares, percentile ranks, histogram counts).
package htmlreport
