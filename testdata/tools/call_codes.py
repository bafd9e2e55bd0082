#!/usr/bin/python3
"""Per-call genotype codes read with cyvcf2 (Debian package python3-cyvcf2).

Usage: call_codes.py INPUT.vcf[.gz] > OUT.tsv

Keeps every record with one ALT where REF and ALT are single bases from
ACGT, whatever its FILTER.  Writes chrom, pos and one code per sample:
0 hom-ref, 1 het, 2 hom-alt, 3 missing (any allele missing, or more than
two alleles), 4 haploid ref, 5 haploid alt.
"""
import sys
from cyvcf2 import VCF

bases = set("ACGT")
vcf = VCF(sys.argv[1], gts012=False)
print("chrom\tpos\tcodes")
for v in vcf:
    if len(v.ALT) != 1 or v.REF not in bases or v.ALT[0] not in bases:
        continue
    codes = []
    for g in v.genotypes:
        alleles = g[:-1]  # last item is the phase flag
        if len(alleles) == 1:
            a = alleles[0]
            codes.append(3 if a < 0 else (4 if a == 0 else 5))
        elif len(alleles) == 2 and min(alleles) >= 0:
            codes.append(alleles[0] + alleles[1])
        else:
            codes.append(3)
    print(f"{v.CHROM}\t{v.POS}\t" + ",".join(str(c) for c in codes))
