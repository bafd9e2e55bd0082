// Package shard is the shard state format and the merge of shard states.
//
// Shard states: what `fgauge scan --state-out FILE` writes so that
// `fgauge merge` can produce the outputs of one pass over the whole input.
//
// File layout (all integers little-endian):
//
//	bytes 0-7    magic "FGSTATE\x00"
//	bytes 8-11   format version (stateFormat)
//	bytes 12-19  payload length in bytes
//	bytes 20-51  SHA-256 of the payload
//	bytes 52-    payload: a zstd frame holding the gob encoding of State
//
// A file whose magic, version, length or checksum do not match is rejected
// before anything in it is decoded.
//
// Chromosomes split across shards: a shard that holds only part of an
// autosome keeps that part's raw per-site data (positions, the frequencies
// given to the detector, 2-bit genotypes and capped likelihoods) instead of
// its runs; merge joins the parts in position order and runs detection on
// the joined chromosome. The joined data are the data a single pass
// collects, so the runs are identical by construction. The alternative,
// detecting runs in overlapping margins and stitching them, can only be
// made approximately equal (an HMM path depends on every site of the
// chromosome) and needs margin sizes tuned per data set; raw data cost
// about N*S/4 bytes per split piece (N samples, S sites), which the plan
// keeps small by splitting only chromosomes larger than a shard.
package shard

import (
	"bytes"
	"crypto/sha256"
	"encoding/binary"
	"encoding/gob"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime/debug"
	"slices"
	"sort"
	"strings"

	"github.com/klauspost/compress/zstd"

	"fgauge/cmd/fgauge/internal/badinput"
	"fgauge/roh"
	"fgauge/stats"
	"fgauge/vcfscan"
)

const (
	stateMagic  = "FGSTATE\x00"
	stateFormat = 1
	stateHead   = 8 + 4 + 8 + sha256.Size
)

// Errors of reading and matching shard states; test with errors.Is.
var (
	ErrCorrupt  = errors.New("not a valid shard state (corrupt, truncated or not a state file)")
	ErrMismatch = errors.New("shard states do not belong to one run")
)

// Region is one region of a shard, 1-based inclusive; End is
// math.MaxInt64 for "to the end of the chromosome".
type Region struct {
	Chrom      string
	Start, End int64
}

// State is everything one shard contributes to a merged result.
type State struct {
	Format  int
	Version string

	// Identity of the run: the input, the options that change results,
	// the selected samples.
	InputPath     string // as given on the command line (for run.json)
	InputAbs      string
	InputSize     int64
	InputModUnix  int64
	InputFormat   string
	Options       []string // "name=value", sorted; files named by options by content hash
	SamplesInFile []string
	Samples       []string
	ContigOrder   []string // header contigs in order: the genome order of merge
	ExtraContigs  []string // contigs first met in records (not in the header)

	// WholeFile is set when the shard read the whole input (no regions).
	WholeFile bool
	Regions   []Region

	Read     int64
	Kept     int64
	Skipped  []int64 // by vcfscan.SkipReason
	Masked   int64
	Warnings []vcfscan.Warning

	Totals    *stats.Totals
	ROH       *roh.Result // runs of whole chromosomes; nil with --no-roh
	ROHConfig *roh.Config
	Pieces    []roh.Piece // raw data of chromosomes held in part
	Pedigree  []string    // f_pedigree column, nil without --pedigree

	SitesFile    string // relative to the state file's folder, or absolute
	SitesSHA256  string
	PopSitesFile string
	PopSHA256    string

	// XRanges are the compressed ranges of the site table holding non-PAR
	// X rows tested with sexes decided from this shard's own X and Y
	// sites, XTestSexes those sexes (sexcheck codes, per sample); nil
	// when the X rows used given sexes or the shard has no X. Merge
	// accepts the rows only when the whole run decides the same sexes.
	XRanges    []XRange
	XTestSexes []uint8

	WallSeconds float64
}

// XRange is a compressed byte range [Start, End) of a site table.
type XRange struct{ Start, End int64 }

// WriteFile writes st atomically (temporary file, then rename).
func WriteFile(path string, st *State) error {
	var gb bytes.Buffer
	if err := gob.NewEncoder(&gb).Encode(st); err != nil {
		return fmt.Errorf("encoding shard state: %w", err)
	}
	enc, err := zstd.NewWriter(nil, zstd.WithEncoderLevel(zstd.SpeedFastest), zstd.WithEncoderConcurrency(1))
	if err != nil {
		return err
	}
	payload := enc.EncodeAll(gb.Bytes(), nil)
	enc.Close()
	head := make([]byte, stateHead)
	copy(head, stateMagic)
	binary.LittleEndian.PutUint32(head[8:], stateFormat)
	binary.LittleEndian.PutUint64(head[12:], uint64(len(payload)))
	sum := sha256.Sum256(payload)
	copy(head[20:], sum[:])

	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, ".fgauge-state-*")
	if err != nil {
		return fmt.Errorf("writing shard state: %w", err)
	}
	defer os.Remove(tmp.Name())
	if _, err := tmp.Write(head); err == nil {
		_, err = tmp.Write(payload)
	}
	if err == nil {
		err = tmp.Sync()
	}
	if cerr := tmp.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return fmt.Errorf("writing shard state %s: %w", path, err)
	}
	return os.Rename(tmp.Name(), path)
}

// ReadFile reads and checks a state file. Errors name the file and
// wrap ErrCorrupt for anything that is not an intact state.
func ReadFile(path string) (*State, error) {
	raw, err := os.ReadFile(path)
	if err != nil {
		return nil, badinput.Wrap(err)
	}
	bad := func(format string, a ...any) error {
		return fmt.Errorf("%s: %w: %s", path, ErrCorrupt, fmt.Sprintf(format, a...))
	}
	if len(raw) < stateHead || string(raw[:8]) != stateMagic {
		return nil, bad("no shard-state header")
	}
	if v := binary.LittleEndian.Uint32(raw[8:]); v != stateFormat {
		return nil, bad("state format %d, this fgauge reads format %d", v, stateFormat)
	}
	n := binary.LittleEndian.Uint64(raw[12:])
	payload := raw[stateHead:]
	if uint64(len(payload)) != n {
		return nil, bad("payload is %d bytes, header says %d (truncated or extended)", len(payload), n)
	}
	if sum := sha256.Sum256(payload); !bytes.Equal(sum[:], raw[20:stateHead]) {
		return nil, bad("SHA-256 checksum does not match the payload")
	}
	dec, err := zstd.NewReader(nil, zstd.WithDecoderConcurrency(1), zstd.WithDecoderMaxMemory(16<<30))
	if err != nil {
		return nil, err
	}
	defer dec.Close()
	gb, err := dec.DecodeAll(payload, nil)
	if err != nil {
		return nil, bad("payload does not decompress: %v", err)
	}
	st := &State{}
	if err := gob.NewDecoder(bytes.NewReader(gb)).Decode(st); err != nil {
		return nil, bad("payload does not decode: %v", err)
	}
	if st.Format != stateFormat || st.Totals == nil || len(st.Skipped) != int(vcfscan.NumSkipReasons) {
		return nil, bad("payload is incomplete")
	}
	return st, nil
}

// SiteTablePath resolves a site table path stored in the state at statePath.
func SiteTablePath(statePath, p string) string {
	if p == "" || filepath.IsAbs(p) {
		return p
	}
	return filepath.Join(filepath.Dir(statePath), p)
}

// CheckSiteTables verifies that the shard's site tables exist and match
// the checksums recorded in its state.
func (st *State) CheckSiteTables(statePath string) error {
	for _, f := range [][2]string{{st.SitesFile, st.SitesSHA256}, {st.PopSitesFile, st.PopSHA256}} {
		if f[0] == "" {
			continue
		}
		p := SiteTablePath(statePath, f[0])
		sum, err := FileSHA256(p)
		if err != nil {
			return fmt.Errorf("%s: site table of this shard: %w", statePath, err)
		}
		if sum != f[1] {
			return fmt.Errorf("%s: %w: site table %s changed since the state was written (checksum differs)", statePath, ErrCorrupt, p)
		}
	}
	return nil
}

func FileSHA256(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", err
	}
	return fmt.Sprintf("%x", h.Sum(nil)), nil
}

// RelTo returns target relative to the folder of statePath when possible.
func RelTo(statePath, target string) string {
	sd, err1 := filepath.Abs(filepath.Dir(statePath))
	ta, err2 := filepath.Abs(target)
	if err1 != nil || err2 != nil {
		return target
	}
	if r, err := filepath.Rel(sd, ta); err == nil {
		return r
	}
	return ta
}

// scanFlagsIgnored are scan options that do not change results, and
// regions, which the state records apart.
var scanFlagsIgnored = map[string]bool{
	"o": true, "out": true, "force": true, "threads": true, "region": true,
	"report": true, "no-progress": true, "cpu-profile": true, "state-out": true, "skip-if-valid-state": true,
	"guard-line-bytes": true, "guard-samples": true, "guard-alleles": true, "guard-block-bytes": true,
}

// ScanFlagsFiles are scan options naming files whose content matters.
var ScanFlagsFiles = map[string]bool{
	"samples": true, "exclude-samples": true, "populations": true, "freqs": true,
	"recombination-map": true, "pedigree": true,
}

// OptionFingerprint lists every result-changing option of fs as
// "name=value" (defaults included, files by SHA-256 of their content).
func OptionFingerprint(fs *flag.FlagSet) ([]string, error) {
	var out []string
	var err error
	fs.VisitAll(func(f *flag.Flag) {
		if scanFlagsIgnored[f.Name] || err != nil {
			return
		}
		v := f.Value.String()
		if ScanFlagsFiles[f.Name] && v != "" {
			sum, e := FileSHA256(v)
			if e != nil {
				err = badinput.Errorf("--%s: %v", f.Name, e)
				return
			}
			v = "sha256:" + sum
		}
		out = append(out, f.Name+"="+v)
	})
	sort.Strings(out)
	return out, err
}

// NormalizeRegions normalises the regions of a shard.
func NormalizeRegions(regs []vcfscan.Region) []Region {
	out := make([]Region, 0, len(regs))
	for _, r := range regs {
		s, e := r.Start, r.End
		if s < 1 {
			s = 1
		}
		if e <= 0 {
			e = math.MaxInt64
		}
		out = append(out, Region{r.Chrom, s, e})
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Chrom != out[j].Chrom {
			return out[i].Chrom < out[j].Chrom
		}
		return out[i].Start < out[j].Start
	})
	return out
}

// WholeChroms returns the chromosomes a shard holds entirely: those with a
// region from 1 to the end (or to the header length).
func WholeChroms(regs []Region, contigs []vcfscan.Contig) map[string]bool {
	length := map[string]int64{}
	for _, c := range contigs {
		length[c.Name] = c.Length
	}
	whole := map[string]bool{}
	for _, r := range regs {
		if r.Start <= 1 && (r.End == math.MaxInt64 || (length[r.Chrom] > 0 && r.End >= length[r.Chrom])) {
			whole[r.Chrom] = true
		}
	}
	return whole
}

// InputIdentity returns the absolute path, size and modification time of
// the input.
func InputIdentity(path string) (abs string, size, mod int64, err error) {
	if path == "-" {
		return "", 0, 0, badinput.Errorf("--state-out needs an input file, not standard input")
	}
	st, err := os.Stat(path)
	if err != nil {
		return "", 0, 0, err
	}
	abs, err = filepath.Abs(path)
	return abs, st.Size(), st.ModTime().Unix(), err
}

// Sink routes a shard's batches to the ROH collector (records of
// chromosomes the shard holds whole) and to the piece collector (records
// of chromosomes it holds in part).
type Sink struct {
	rc     *roh.Collector
	pc     *roh.PieceCollector
	split  func(id int) bool
	whole  vcfscan.Batch
	pieces vcfscan.Batch
	wf, pf []float64
}

// AddBatch splits b by chromosome into the two collectors.
func (s *Sink) AddBatch(b *vcfscan.Batch, freqs []float64) error {
	nAll := 0
	for i := range b.Records {
		if s.split(b.Records[i].ChromID) {
			nAll++
		}
	}
	switch nAll {
	case 0:
		return s.rc.AddBatch(b, freqs)
	case len(b.Records):
		return s.pc.AddBatch(b, freqs)
	}
	ns := b.NSamples
	for _, d := range []*vcfscan.Batch{&s.whole, &s.pieces} {
		d.Seq, d.NSamples = b.Seq, ns
		d.Records, d.GT, d.PL, d.HasPL = d.Records[:0], d.GT[:0], d.PL[:0], d.HasPL[:0]
	}
	s.wf, s.pf = s.wf[:0], s.pf[:0]
	for i := range b.Records {
		d, f := &s.whole, &s.wf
		if s.split(b.Records[i].ChromID) {
			d, f = &s.pieces, &s.pf
		}
		d.Records = append(d.Records, b.Records[i])
		d.GT = append(d.GT, b.GT[i*ns:(i+1)*ns]...)
		if len(b.PL) > 0 {
			d.PL = append(d.PL, b.PL[3*i*ns:3*(i+1)*ns]...)
			d.HasPL = append(d.HasPL, i < len(b.HasPL) && b.HasPL[i])
		}
		if freqs != nil {
			*f = append(*f, freqs[i])
		}
	}
	wf, pf := s.wf, s.pf
	if freqs == nil {
		wf, pf = nil, nil
	}
	if len(b.PL) == 0 {
		s.whole.PL, s.whole.HasPL, s.pieces.PL, s.pieces.HasPL = nil, nil, nil, nil
	}
	if err := s.rc.AddBatch(&s.whole, wf); err != nil {
		return err
	}
	return s.pc.AddBatch(&s.pieces, pf)
}

// SameIdentity reports the first way in which b differs from a as a run,
// or "" when they belong to the same run.
func SameIdentity(a, b *State) string {
	switch {
	case a.Version != b.Version:
		return fmt.Sprintf("fgauge versions differ (%s, %s)", a.Version, b.Version)
	case a.InputAbs != b.InputAbs || a.InputSize != b.InputSize || a.InputModUnix != b.InputModUnix:
		return fmt.Sprintf("inputs differ (%s, %d bytes vs %s, %d bytes, or modified since)", a.InputAbs, a.InputSize, b.InputAbs, b.InputSize)
	case !slices.Equal(a.Options, b.Options):
		for i := range min(len(a.Options), len(b.Options)) {
			if a.Options[i] != b.Options[i] {
				return fmt.Sprintf("options differ (%s vs %s)", a.Options[i], b.Options[i])
			}
		}
		return "options differ"
	case !slices.Equal(a.SamplesInFile, b.SamplesInFile) || !slices.Equal(a.Samples, b.Samples):
		return "sample sets differ"
	case !slices.Equal(a.ContigOrder, b.ContigOrder):
		return "contig lists differ"
	case (a.ROH == nil) != (b.ROH == nil):
		return "one shard detected runs of homozygosity, the other did not"
	}
	return ""
}

// DescribeRegions renders a shard's regions for messages.
func DescribeRegions(st *State) string {
	if st.WholeFile {
		return "the whole input"
	}
	var parts []string
	for _, r := range st.Regions {
		if r.End == math.MaxInt64 {
			parts = append(parts, fmt.Sprintf("%s:%d-", r.Chrom, r.Start))
		} else {
			parts = append(parts, fmt.Sprintf("%s:%d-%d", r.Chrom, r.Start, r.End))
		}
	}
	return strings.Join(parts, ",")
}

// BuildVersion is the version of this fgauge as recorded in states: the
// release version plus, when the binary was built from a version-control
// checkout, its revision (and "-modified" for uncommitted changes), so
// that shards of one run come from one build.
func BuildVersion(version string) string {
	v := version
	bi, ok := debug.ReadBuildInfo()
	if !ok {
		return v
	}
	var rev, mod string
	for _, kv := range bi.Settings {
		switch kv.Key {
		case "vcs.revision":
			rev = kv.Value
		case "vcs.modified":
			if kv.Value == "true" {
				mod = "-modified"
			}
		}
	}
	if len(rev) > 12 {
		rev = rev[:12]
	}
	if rev != "" {
		v += "+" + rev + mod
	}
	return v
}

// NewIdentity returns a state holding only the identity of a shard: this
// build's version, the input file, the result-changing options
// (OptionFingerprint) and the shard's regions.
func NewIdentity(version, input string, options []string, regs []vcfscan.Region) (*State, error) {
	abs, size, mod, err := InputIdentity(input)
	if err != nil {
		return nil, err
	}
	return &State{Format: stateFormat, Version: BuildVersion(version), InputPath: input, InputAbs: abs,
		InputSize: size, InputModUnix: mod, Options: options, WholeFile: len(regs) == 0,
		Regions: NormalizeRegions(regs)}, nil
}

// NewSink returns a Sink that sends the records of chromosomes for which
// split reports true to pc and the others to rc.
func NewSink(rc *roh.Collector, pc *roh.PieceCollector, split func(chromID int) bool) *Sink {
	return &Sink{rc: rc, pc: pc, split: split}
}
