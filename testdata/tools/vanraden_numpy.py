#!/usr/bin/python3
"""Genomic coancestry (VanRaden 2008, J Dairy Sci 91:4414, method 1, G/2) of
sire x dam pairs of testdata/cohort189.vcf.gz, computed from scratch with
NumPy (Debian python3-numpy), for mating/reference_test.go.

Run from testdata/: /usr/bin/python3 tools/vanraden_numpy.py
Writes mating/cohort189_coancestry_numpy.tsv.

The VCF is parsed here in plain Python (no VCF library). Site policy: one
ALT, REF and ALT single bases from ACGT, any FILTER; a call with a missing
allele, or not diploid, is missing. Genotypes are alt-allele counts.
Two frequency sources:
  cohort: alt count / (2 * diploid calls) over all 189 samples;
  info_af: the INFO AF value (sites without one, or outside [0,1], are
  left out).
Z = M - 2p with missing calls set to 0 (mean imputation);
G = Z Z' / (2 sum p(1-p)); coancestry = G / 2.
Sires: samples 1-10 of the header; dams: samples 11-70.
"""
import gzip
import numpy as np

rows, af = [], []
with gzip.open("cohort189.vcf.gz", "rt") as f:
    for line in f:
        if line.startswith("##"):
            continue
        fields = line.rstrip("\n").split("\t")
        if line.startswith("#"):
            samples = fields[9:]
            continue
        ref, alt = fields[3], fields[4]
        if ref not in ("A", "C", "G", "T") or alt not in ("A", "C", "G", "T"):
            continue
        g = []
        for s in fields[9:]:
            al = s.split(":")[0].replace("|", "/").split("/")
            g.append(np.nan if len(al) != 2 or "." in al else float(int(al[0]) + int(al[1])))
        rows.append(g)
        a = np.nan
        for kv in fields[7].split(";"):
            if kv.startswith("AF="):
                try:
                    a = float(kv[3:])
                except ValueError:
                    a = np.nan
        if not (0 <= a <= 1):
            a = np.nan
        af.append(a)

M = np.array(rows).T  # samples x sites
called = ~np.isnan(M)
cohort = np.nansum(M, axis=0) / (2 * called.sum(axis=0))
sires, dams = list(range(0, 10)), list(range(10, 70))


def coancestry(p):
    keep = ~np.isnan(p)
    X, q = M[:, keep], p[keep]
    Z = np.where(np.isnan(X), 0.0, X - 2 * q)
    G = Z @ Z.T / (2 * np.sum(q * (1 - q)))
    return G / 2, int(keep.sum())


out = {}
for name, p in (("cohort", cohort), ("info_af", np.array(af))):
    out[name], n = coancestry(p)
    print(name, "sites", n)

with open("mating/cohort189_coancestry_numpy.tsv", "w") as f:
    f.write("sire\tdam\tcohort\tinfo_af\n")
    for s in sires:
        for d in dams:
            f.write("%s\t%s\t%r\t%r\n" % (samples[s], samples[d], float(out["cohort"][s, d]), float(out["info_af"][s, d])))
