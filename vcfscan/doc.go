// Package vcfscan turns the bytes of a multi-sample VCF or BCF file into
// batches of biallelic SNP genotypes, streaming and in parallel.
//
// It detects the container from the content (plain text, gzip, BGZF, BCF
// 2.2), inflates BGZF blocks on several goroutines (checking CRC32 and
// ISIZE of each block, SAM/BAM specification section 4.1), cuts the text
// into chunks of whole lines that worker goroutines parse, and returns the
// resulting batches in input order. Memory stays bounded: a fixed number
// of blocks and chunks are in flight whatever the input size, and Limits
// caps what a header or a line can make the reader allocate.
//
// The site policy keeps records with one ALT where REF and ALT are single
// A/C/G/T bases; other records are counted by SkipReason. A call with any
// missing allele is Missing; haploid calls get their own codes.
//
// Reader.Warnings counts conditions that do not stop reading, by kind:
// bgzf_missing_eof (the last block is not the empty EOF block),
// contig_without_length (##contig without length=), contig_not_in_header
// (a CHROM with no ##contig line), haploid_calls, polyploid_calls_as_missing,
// blank_lines, no_fileformat_line and unknown_fileformat.
//
// vcfscan knows nothing about statistics: the stats and roh packages
// consume its batches. It is the one owner of BGZF and index I/O in
// fgauge, and the only package that imports biogo/hts:
//
//   - OpenIndex reads a .tbi or .csi index (checked against damaged counts
//     and refused when older than its data) for region queries, plan's
//     shards and shard ordering; Offset and Chunk are its virtual offsets.
//   - BGZFWriter writes BGZF (Offset reports virtual offsets); BGZFEOF,
//     BGZFBlockSize and BGZFRatio serve block splicing and cost estimates.
//   - TabixWriter and IndexBGZFTable write tabix indexes (the bytes
//     biogo/hts/tabix writes, built in linear time; see tabixBuild).
//   - OpenText opens small text inputs, plain, gzip or BGZF by content.
package vcfscan
