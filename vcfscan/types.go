package vcfscan

import "math"

// Geno is one call at a kept (biallelic) site, coded by its alternate-allele
// count. Haploid calls on a site are coded separately so that diploid
// statistics can leave them out.
type Geno uint8

// Genotype codes stored in Batch.GT.
const (
	HomRef       Geno = 0 // 0/0
	Heterozygous Geno = 1 // 0/1, 1/0, 0|1, 1|0
	HomAlt       Geno = 2 // 1/1
	Missing      Geno = 3 // ./., any allele missing, or masked by --min-gq/--min-dp
	HaploidRef   Geno = 4 // 0
	HaploidAlt   Geno = 5 // 1
)

// Contig is a sequence named in the header (##contig) or first met in a record.
type Contig struct {
	Name   string
	Length int64 // 0 when the header gives no length
}

// FieldDef is one ##INFO or ##FORMAT definition.
type FieldDef struct {
	ID, Number, Type, Description string
}

// Format is the container detected from the first bytes of the input.
type Format int

// Input formats recognised by content.
const (
	FormatVCF      Format = iota // plain text
	FormatVCFGzip                // gzip that is not BGZF
	FormatVCFBGZF                // BGZF-compressed text
	FormatBCF                    // BGZF-compressed BCF 2.x
	FormatBCFPlain               // uncompressed BCF 2.x
)

func (f Format) String() string {
	return [...]string{"vcf", "vcf.gzip", "vcf.bgzf", "bcf.bgzf", "bcf"}[f]
}

// Header is the parsed VCF/BCF header.
type Header struct {
	FileFormat string   // value of ##fileformat
	Meta       []string // every meta line, without the leading "##"
	Contigs    []Contig // in header order; contigs first seen in records are appended
	Samples    []string // every sample column, in file order
	Info       map[string]FieldDef
	FormatDefs map[string]FieldDef
}

// SkipReason says why a record was not kept by the site policy.
type SkipReason int

// Reasons a record is skipped; counted in Batch.Skipped and summed by the caller.
const (
	SkipMultiallelic  SkipReason = iota // more than one ALT allele
	SkipIndel                           // REF or ALT not a single base (indel, MNP)
	SkipSymbolic                        // symbolic, breakend or "*" ALT, or ALT "."
	SkipFiltered                        // FILTER not PASS or "." (unless IncludeFiltered)
	SkipNoGT                            // no GT in FORMAT (or no sample columns)
	SkipOutsideRegion                   // outside the requested regions
	NumSkipReasons
)

var skipNames = [...]string{"multiallelic", "indel_or_mnp", "symbolic_or_no_alt", "filtered", "no_genotypes", "outside_region"}

func (r SkipReason) String() string { return skipNames[r] }

// Record is one kept site. Byte slices point into the Batch that holds the
// record and are valid until the batch is released.
type Record struct {
	ChromID  int    // index into Header.Contigs
	Pos      int64  // 1-based
	Ref, Alt []byte // single bases for kept SNPs
	ID       []byte
	Filter   []byte
	// InfoValue is the value of Options.InfoKey (e.g. AF) or NaN when absent
	// or when no key was asked for.
	InfoValue float64
	// Line is the 1-based line number (VCF) or 0-based record index (BCF)
	// of the record in the input, for error messages; 0 for VCF records
	// read through a region query, where line numbers are unknown.
	Line int64
}

// Batch is a run of consecutive kept records with their genotypes.
// GT holds len(Records)*NSamples codes, record-major: the calls of record i
// are GT[i*NSamples:(i+1)*NSamples], in the order of Reader.Samples().
// When Options.WantPL is set, HasPL[i] says whether record i carried PL
// (or GL); if any record of the batch did, PL holds three phred-scaled
// likelihoods per call (0/0, 0/1, 1/1) in the same layout times three
// (zeros for records without), else PL is empty (len 0, possibly not nil).
// Likelihoods of calls masked by MinGQ/MinDP are zeros (no information).
// When Options.WantDP is set, HasDP[i] says whether record i carried
// FORMAT DP; if any record of the batch did, DP holds one depth per call in
// the layout of GT (-1 for a missing value and for records without DP),
// else DP is empty.
type Batch struct {
	Seq      int64 // 0,1,2,... in input order
	Records  []Record
	NSamples int
	GT       []Geno
	PL       []uint16
	HasPL    []bool
	DP       []int32
	HasDP    []bool
	// Skipped counts the records of this stretch of input that the policy
	// removed, by reason; Read counts all data records seen.
	Skipped [NumSkipReasons]int64
	Read    int64
	// Masked counts calls set to Missing by MinGQ/MinDP.
	Masked int64
	arena  []byte
	st     *batchState // reader bookkeeping; nil outside the reader
}

// Calls returns the genotype codes of record i.
func (b *Batch) Calls(i int) []Geno {
	return b.GT[i*b.NSamples : (i+1)*b.NSamples]
}

// Options controls reading and the site and genotype policy.
type Options struct {
	Threads         int      // decompression and parse workers; 0 means all cores
	IncludeFiltered bool     // keep records whose FILTER is not PASS or "."
	MinGQ, MinDP    int      // mask calls below these to Missing; 0 disables
	Samples         []string // keep only these samples, in this order (nil keeps all, in file order); unknown names are an error
	ExcludeSamples  []string // drop these samples (applied after Samples); unknown names are an error
	InfoKey         string   // INFO key to read into Record.InfoValue (e.g. "AF")
	WantPL          bool     // decode PL/GL into Batch.PL when present
	WantDP          bool     // decode FORMAT DP into Batch.DP when present
	Regions         []Region // restrict to these regions via the index
	BatchSize       int      // at most this many data lines per batch; 0 means batches of about 2 MiB of text
	// RequireSorted makes Next fail with ErrUnsorted when a position goes
	// backwards within a chromosome or a chromosome's records are split
	// into separate blocks; the error names the first out-of-order pair.
	RequireSorted bool
	// RegionsByStart keeps a record when its POS lies in a region rather
	// than when its REF span overlaps one, so that adjacent regions never
	// share a record (shards of one input; see regionEnd).
	RegionsByStart bool

	Limits Limits

	chunkBytes int // size of the text chunks parsed in parallel; 0 = chunkTarget (tests shrink it)
}

// Region is a chromosome interval, 1-based and inclusive; End 0 means to the end.
type Region struct {
	Chrom      string
	Start, End int64
}

// Limits bound what a hostile input can make the reader allocate.
type Limits struct {
	MaxLineBytes   int // default 64 MiB; also bounds a header
	MaxSamples     int // default 1,000,000
	MaxAlleles     int // default 1,000
	MaxBlockExpand int // max ISIZE of a BGZF block (default 65,536, the format's maximum); plain gzip is inflated as a stream and needs no guard
}

// NaN is returned for absent INFO values.
var NaN = math.NaN()
