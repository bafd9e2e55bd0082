#!/usr/bin/python3
"""Write BCF 2.2 twins (with .csi indexes) of the VCF fixtures in testdata/.

Needs the Debian package python3-pysam (0.20.0 was used). Run from the
repository root:

    /usr/bin/python3 testdata/tools/make_bcf_twins.py

Each twin is written record by record through pysam.VariantFile, which
re-encodes the VCF text as BCF 2.2 (htslib adds IDX= attributes to the
header). The CSI index is built by pysam.tabix_index (htslib
bcf_index_build2, min_shift 14).
"""
import gzip
import math
import os
import shutil
import tempfile

import numpy
import pysam

TWINS = [
    ("testdata/chr22_1000g.vcf.gz", "testdata/bcf/chr22_1000g.bcf"),
    ("testdata/cohort189.vcf.gz", "testdata/bcf/cohort189.bcf"),
    ("testdata/annotated_small.vcf", "testdata/bcf/annotated_small.bcf"),
    # haploid calls on chrX
    ("testdata/edge/test-haploidX.vcf", "testdata/bcf/test-haploidX.bcf"),
    # GL without PL; no ##contig lines (htslib adds them while writing)
    ("testdata/edge/gl_chr1.vcf", "testdata/bcf/gl_chr1.bcf"),
    # six contigs, MNPs: region queries over several contigs
    ("testdata/edge/test.mnp.vcf", "testdata/bcf/test.mnp.bcf"),
]

# Edge files htslib can encode whole (the others in testdata/edge/ are
# refused or cut short by htslib: empty.vcf, test-invalid-header.vcf,
# buffer_realloc.vcf, missing-FORMAT-metadata-elt.vcf, no_GENO_row.vcf).
EDGE = [
    "FORMAT_header_no_SAMPLEs.vcf", "banded_gvcf.vcf", "chr7-sub.vcf.gz",
    "decomposed.vcf", "expand.vcf", "issue_198.vcf", "multiple_INFO_fields.vcf",
    "no-seq-len.vcf", "no-seq-names.vcf", "no_FORMAT_column.vcf",
    "no_INFO_header.vcf", "structural.vcf", "test-format-string.vcf",
    "test-genotypes.vcf", "test-hemi.vcf",
    "test-multiallelic-homozygous-alt.vcf.gz",
]
EDGE_TWINS = []  # not indexed
for name in EDGE:
    stem = name.replace(".vcf.gz", "").replace(".vcf", "")
    EDGE_TWINS.append(("testdata/edge/" + name, "testdata/bcf/edge/" + stem + ".bcf"))


def open_text(path):
    if path.endswith(".gz"):
        return gzip.open(path, "rt")
    return open(path)


def undeclared_contigs(path):
    declared, used = set(), []
    with open_text(path) as f:
        for line in f:
            if line.startswith("##contig=<ID="):
                declared.add(line[len("##contig=<ID="):].split(",")[0].rstrip(">\n"))
            elif not line.startswith("#"):
                c = line.split("\t", 1)[0]
                if c not in declared and c not in used:
                    used.append(c)
    return used


def main():
    os.makedirs("testdata/bcf/edge", exist_ok=True)
    for src, dst in TWINS + EDGE_TWINS:
        # Contigs used by records but not declared in the header are
        # declared (without length) in a temporary copy of the text, so
        # that BCF can number them; the records are unchanged.
        text = src
        missing = undeclared_contigs(src)
        if missing:
            text = os.path.join(tempfile.mkdtemp(), "in.vcf")
            with open_text(src) as f, open(text, "w") as out:
                for line in f:
                    if line.startswith("#CHROM"):
                        for c in missing:
                            out.write("##contig=<ID=%s>\n" % c)
                    out.write(line)
        with pysam.VariantFile(text) as vin:
            with pysam.VariantFile(dst, "wb", header=vin.header) as vout:
                n = 0
                for rec in vin:
                    vout.write(rec)
                    n += 1
        if (src, dst) in TWINS:
            pysam.tabix_index(dst, preset="vcf", csi=True, force=True)
        print(dst, n, "records")

    # A CSI (rather than tabix) index of a VCF, whose auxiliary field
    # carries the sequence names: built on a copy, since the index must sit
    # next to its data file; the test copies both to a temporary directory.
    tmp = os.path.join(tempfile.mkdtemp(), "chr22_1000g.vcf.gz")
    shutil.copyfile("testdata/chr22_1000g.vcf.gz", tmp)
    pysam.tabix_index(tmp, preset="vcf", csi=True, force=True)
    shutil.copyfile(tmp + ".csi", "testdata/bcf/chr22_1000g.vcf.gz.csi")
    print("testdata/bcf/chr22_1000g.vcf.gz.csi")

    # htslib's own decoding of three twins, for an external check of the
    # Go BCF decoder: see htslib_calls() below.
    for stem in ("cohort189", "test-haploidX", "gl_chr1"):
        htslib_calls("testdata/bcf/%s.bcf" % stem, "testdata/bcf/%s.htslib_calls.tsv" % stem)


def geno_code(alleles):
    """The project's call code (vcfscan.Geno) of a GT tuple as htslib
    decodes it: 0/1/2 alternate alleles, 3 missing (any allele missing or
    more than two alleles), 4/5 haploid reference/alternate."""
    if len(alleles) == 0 or any(a is None for a in alleles) or len(alleles) > 2:
        return 3
    if len(alleles) == 1:
        return 4 + alleles[0]
    return alleles[0] + alleles[1]


def phred(values, gl):
    """Three phred-scaled likelihoods (0/0, 0/1, 1/1) the way vcfscan
    stores them: PL as is; GL via the shortest decimal of the float32 value,
    times -10, rounded half away from zero; a haploid pair (R, A) becomes
    (R, 65535, A); anything else (missing values, other counts) is 0,0,0;
    values are clamped to 0..65535."""
    if values is None or any(v is None for v in values) or len(values) not in (2, 3):
        return [0, 0, 0]
    out = []
    for v in values:
        if gl:
            x = -10.0 * float(str(numpy.float32(v)))
            v = math.floor(x + 0.5)
        out.append(min(max(int(v), 0), 65535))
    if len(out) == 2:
        return [out[0], 65535, out[1]]
    return out


def htslib_calls(bcf, out):
    """Write, for each record that is one ALT with single ACGT bases, the
    call codes and likelihoods htslib (through pysam) reads from the BCF:
    chrom, pos, codes (comma-separated, one per sample), likelihoods
    (3 per sample, or '.' when the record has neither PL nor GL)."""
    with pysam.VariantFile(bcf) as vin, open(out, "w") as f:
        f.write("chrom\tpos\tcalls\tlikelihoods\n")
        for rec in vin:
            if rec.alts is None or len(rec.alts) != 1:
                continue
            if len(rec.ref) != 1 or len(rec.alts[0]) != 1 or rec.ref.upper() not in "ACGT" or rec.alts[0].upper() not in "ACGT":
                continue
            codes, lik = [], []
            key = "PL" if "PL" in rec.format else ("GL" if "GL" in rec.format else None)
            for s in rec.samples.values():
                gt = s.get("GT") if "GT" in rec.format else None
                codes.append(str(geno_code(gt if gt is not None else ())))
                if key is not None:
                    lik.extend(str(v) for v in phred(s.get(key), key == "GL"))
            f.write("%s\t%d\t%s\t%s\n" % (rec.chrom, rec.pos, ",".join(codes), ",".join(lik) if key else "."))
    print(out)


if __name__ == "__main__":
    main()
