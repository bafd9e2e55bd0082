// Package htmlreport turns the output folder of `fgauge scan` into one
// self-contained HTML file (report.html) and, on request, one printable page
// plus a JSON twin per sample (samples/<name>.html, samples/<name>.json).
//
// The report reads only the files the scan wrote (samples.tsv, runs.tsv,
// sites.tsv.gz, populations.tsv, populations_pairwise.tsv, run.json); optional
// files may be missing and unknown columns are ignored. Plots are drawn with
// gonum.org/v1/plot into SVG and embedded inline; pages are rendered with
// html/template so every sample, contig and population name is escaped. The
// pages carry no scripts and reference nothing outside themselves.
//
// The package computes no statistics of its own beyond summaries of the
// tables (medians, shares, percentile ranks, histogram counts).
package htmlreport
