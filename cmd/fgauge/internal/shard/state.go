package shard

// Shard states: what `fgauge scan --state-out FILE` writes so that
// `fgauge merge` can produce the outputs of one pass over the whole input.
//
// File layout (all integers little-endian):
//
//	bytes 0-7    magic "FGSTATE\x00"
//	bytes 8-11   format version (stateFormat)
//	bytes 12-19  payload length in bytes
//	bytes 20-51  SHA-256 of the payload
//	bytes 52-    payload: a zstd frame holding the gob encoding of shardState
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
	errStateCorrupt  = errors.New("not a valid shard state (corrupt, truncated or not a state file)")
	errStateMismatch = errors.New("shard states do not belong to one run")
)

// stateRegion is one region of a shard, 1-based inclusive; End is
// math.MaxInt64 for "to the end of the chromosome".
type stateRegion struct {
	Chrom      string
	Start, End int64
}

// shardState is everything one shard contributes to a merged result.
type shardState struct {
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
	Regions   []stateRegion

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

	WallSeconds float64
}

// writeStateFile writes st atomically (temporary file, then rename).
func writeStateFile(path string, st *shardState) error {
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

// readStateFile reads and checks a state file. Errors name the file and
// wrap errStateCorrupt for anything that is not an intact state.
func readStateFile(path string) (*shardState, error) {
	raw, err := os.ReadFile(path)
	if err != nil {
		return nil, &usageError{err.Error()}
	}
	bad := func(format string, a ...any) error {
		return fmt.Errorf("%s: %w: %s", path, errStateCorrupt, fmt.Sprintf(format, a...))
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
	st := &shardState{}
	if err := gob.NewDecoder(bytes.NewReader(gb)).Decode(st); err != nil {
		return nil, bad("payload does not decode: %v", err)
	}
	if st.Format != stateFormat || st.Totals == nil || len(st.Skipped) != int(vcfscan.NumSkipReasons) {
		return nil, bad("payload is incomplete")
	}
	return st, nil
}

// siteTablePath resolves a site table path stored in the state at statePath.
func siteTablePath(statePath, p string) string {
	if p == "" || filepath.IsAbs(p) {
		return p
	}
	return filepath.Join(filepath.Dir(statePath), p)
}

// checkSiteTables verifies that the shard's site tables exist and match
// the checksums recorded in its state.
func (st *shardState) checkSiteTables(statePath string) error {
	for _, f := range [][2]string{{st.SitesFile, st.SitesSHA256}, {st.PopSitesFile, st.PopSHA256}} {
		if f[0] == "" {
			continue
		}
		p := siteTablePath(statePath, f[0])
		sum, err := fileSHA256(p)
		if err != nil {
			return fmt.Errorf("%s: site table of this shard: %w", statePath, err)
		}
		if sum != f[1] {
			return fmt.Errorf("%s: %w: site table %s changed since the state was written (checksum differs)", statePath, errStateCorrupt, p)
		}
	}
	return nil
}

func fileSHA256(path string) (string, error) {
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

// relTo returns target relative to the folder of statePath when possible.
func relTo(statePath, target string) string {
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
	"o": true, "out": true, "force": true, "threads": true, "region": true, "regions-file": true,
	"report": true, "no-progress": true, "cpu-profile": true, "state-out": true, "skip-if-valid-state": true,
	"max-line-bytes": true, "max-samples": true, "max-alleles": true, "max-block-bytes": true,
}

// scanFlagsFiles are scan options naming files whose content matters.
var scanFlagsFiles = map[string]bool{
	"samples": true, "exclude-samples": true, "populations": true, "freqs": true,
	"recombination-map": true, "pedigree": true,
}

// optionFingerprint lists every result-changing option of fs as
// "name=value" (defaults included, files by SHA-256 of their content).
func optionFingerprint(fs *flag.FlagSet) ([]string, error) {
	var out []string
	var err error
	fs.VisitAll(func(f *flag.Flag) {
		if scanFlagsIgnored[f.Name] || err != nil {
			return
		}
		v := f.Value.String()
		if scanFlagsFiles[f.Name] && v != "" {
			sum, e := fileSHA256(v)
			if e != nil {
				err = usagef("--%s: %v", f.Name, e)
				return
			}
			v = "sha256:" + sum
		}
		out = append(out, f.Name+"="+v)
	})
	sort.Strings(out)
	return out, err
}

// shardRegions normalises the regions of a shard.
func shardRegions(regs []vcfscan.Region) []stateRegion {
	out := make([]stateRegion, 0, len(regs))
	for _, r := range regs {
		s, e := r.Start, r.End
		if s < 1 {
			s = 1
		}
		if e <= 0 {
			e = math.MaxInt64
		}
		out = append(out, stateRegion{r.Chrom, s, e})
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Chrom != out[j].Chrom {
			return out[i].Chrom < out[j].Chrom
		}
		return out[i].Start < out[j].Start
	})
	return out
}

// wholeChroms returns the chromosomes a shard holds entirely: those with a
// region from 1 to the end (or to the header length).
func wholeChroms(regs []stateRegion, contigs []vcfscan.Contig) map[string]bool {
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

// inputIdentity returns the absolute path, size and modification time of
// the input.
func inputIdentity(path string) (abs string, size, mod int64, err error) {
	if path == "-" {
		return "", 0, 0, usagef("--state-out needs an input file, not standard input")
	}
	st, err := os.Stat(path)
	if err != nil {
		return "", 0, 0, err
	}
	abs, err = filepath.Abs(path)
	return abs, st.Size(), st.ModTime().Unix(), err
}

// shardSink routes a shard's batches to the ROH collector (records of
// chromosomes the shard holds whole) and to the piece collector (records
// of chromosomes it holds in part).
type shardSink struct {
	rc     *roh.Collector
	pc     *roh.PieceCollector
	split  func(id int) bool
	whole  vcfscan.Batch
	pieces vcfscan.Batch
	wf, pf []float64
}

// AddBatch splits b by chromosome into the two collectors.
func (s *shardSink) AddBatch(b *vcfscan.Batch, freqs []float64) error {
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

// sameIdentity reports the first way in which b differs from a as a run,
// or "" when they belong to the same run.
func sameIdentity(a, b *shardState) string {
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

// describeRegions renders a shard's regions for messages.
func describeRegions(st *shardState) string {
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

// buildVersion is the version of this fgauge as recorded in states: the
// release version plus, when the binary was built from a version-control
// checkout, its revision (and "-modified" for uncommitted changes), so
// that shards of one run come from one build.
func buildVersion() string {
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

// shardFlags are the scan options of sharded runs.
type shardFlags struct {
	stateOut  string
	skipValid bool
	fs        *flag.FlagSet

	pc          *roh.PieceCollector
	contigOrder []string // genome order: see genomeOrder
	input       string
	nHeader     int // contigs in the header at open
}

func addShardFlags(fs *flag.FlagSet) *shardFlags {
	f := &shardFlags{fs: fs}
	fs.StringVar(&f.stateOut, "state-out", "", "write this shard's mergeable state to `FILE` (for 'fgauge merge'); OUTDIR then gets the shard's site tables and run.json only")
	fs.BoolVar(&f.skipValid, "skip-if-valid-state", false, "with --state-out: do nothing when FILE already holds an intact state of this same shard (for re-running batch scripts)")
	return f
}

// on reports whether this scan writes a shard state.
func (f *shardFlags) on() bool { return f != nil && f.stateOut != "" }

// identity fills the identity fields of a state for this scan.
func (f *shardFlags) identity(o *scanOptions) (*shardState, error) {
	abs, size, mod, err := inputIdentity(o.input)
	if err != nil {
		return nil, err
	}
	opts, err := optionFingerprint(f.fs)
	if err != nil {
		return nil, err
	}
	st := &shardState{Format: stateFormat, Version: buildVersion(), InputPath: o.input, InputAbs: abs,
		InputSize: size, InputModUnix: mod, Options: opts, WholeFile: len(o.read.Regions) == 0,
		Regions: shardRegions(o.read.Regions)}
	return st, nil
}

// skipIfValid reports whether --skip-if-valid-state applies: the state
// file exists, is intact, was written for the same input, options and
// regions by this version, and its site tables are unchanged.
//
// It also sets what reading a shard needs: a record belongs to the region
// holding its POS, so that adjacent shards never both count a deletion
// that spans their boundary.
func (f *shardFlags) skipIfValid(env *runEnv, o *scanOptions) (bool, error) {
	if f.on() {
		f.input = o.input
		o.read.RegionsByStart = true
		if o.report {
			return false, usagef("--report needs the tables of a whole run: run 'fgauge report' on the output of 'fgauge merge'")
		}
		if o.input == "-" {
			return false, usagef("--state-out needs an input file (its identity is part of the state), not standard input")
		}
	}
	if !f.on() {
		if f != nil && f.skipValid {
			return false, usagef("--skip-if-valid-state needs --state-out")
		}
		return false, nil
	}
	if !f.skipValid {
		return false, nil
	}
	if _, err := os.Stat(f.stateOut); err != nil {
		return false, nil
	}
	old, err := readStateFile(f.stateOut)
	if err != nil {
		fmt.Fprintf(env.stderr, "fgauge: %v; scanning the shard again\n", err)
		return false, nil
	}
	want, err := f.identity(o)
	if err != nil {
		return false, err
	}
	want.SamplesInFile, want.Samples, want.ContigOrder = old.SamplesInFile, old.Samples, old.ContigOrder
	want.ROH = old.ROH
	if why := sameIdentity(want, old); why != "" || want.WholeFile != old.WholeFile || !slices.Equal(want.Regions, old.Regions) {
		if why == "" {
			why = "regions differ"
		}
		fmt.Fprintf(env.stderr, "fgauge: %s holds a state of another run (%s); scanning the shard again\n", f.stateOut, why)
		return false, nil
	}
	if err := old.checkSiteTables(f.stateOut); err != nil {
		fmt.Fprintf(env.stderr, "fgauge: %v; scanning the shard again\n", err)
		return false, nil
	}
	fmt.Fprintf(env.stderr, "fgauge: %s already holds this shard's state; skipped\n", f.stateOut)
	return true, nil
}

// separateHeader puts the header lines of the site tables in blocks of
// their own, so that merge can concatenate the shards' blocks without them.
func (f *shardFlags) separateHeader(ws ...*vcfscan.BGZFWriter) error {
	if !f.on() {
		return nil
	}
	for _, w := range ws {
		if w != nil {
			if err := w.Flush(); err != nil {
				return err
			}
		}
	}
	return nil
}

// genomeOrder is the order merge puts shards and chromosomes in: the
// references of the index (the order of the file for tabix, whose names
// are listed as first met), then header contigs the index lacks; without
// an index (a shard of the whole file), the header's contig order.
func genomeOrder(input string, contigs []vcfscan.Contig, regs []vcfscan.Region) []string {
	var order []string
	seen := map[string]bool{}
	if len(regs) > 0 {
		hdr := &vcfscan.Header{Contigs: contigs}
		if refs, err := readIndexRefs(input, hdr); err == nil {
			for _, r := range refs {
				if !seen[r.name] {
					seen[r.name] = true
					order = append(order, r.name)
				}
			}
		}
	}
	for _, c := range contigs {
		if !seen[c.Name] {
			seen[c.Name] = true
			order = append(order, c.Name)
		}
	}
	return order
}

// batchSink receives batches in input order (the ROH collector, or a
// shardSink in front of it).
type batchSink interface {
	AddBatch(b *vcfscan.Batch, freqs []float64) error
}

// sink returns what the ordered stage feeds: nil without ROH, rc for a
// plain scan, and for a shard a router that keeps chromosomes held in
// part as raw pieces.
func (f *shardFlags) sink(rc *roh.Collector, cfg *roh.Config, samples []string, contigs []vcfscan.Contig, regs []vcfscan.Region) (batchSink, error) {
	f.contigOrder = genomeOrder(f.input, contigs, regs)
	f.nHeader = len(contigs)
	if rc == nil {
		return nil, nil
	}
	if !f.on() || len(regs) == 0 {
		return rc, nil
	}
	pc, err := roh.NewPieceCollector(cfg, len(samples))
	if err != nil {
		return nil, err
	}
	f.pc = pc
	whole := wholeChroms(shardRegions(regs), contigs)
	names := make([]string, len(contigs))
	for i, c := range contigs {
		names[i] = c.Name
	}
	split := func(id int) bool {
		// Contigs first met in records (absent from the header) have no
		// name yet; they are kept as pieces, which is always exact.
		return id >= len(names) || !whole[names[id]]
	}
	return &shardSink{rc: rc, pc: pc, split: split}, nil
}

// writeState writes the shard state after the shard's OUTDIR is committed.
func (f *shardFlags) writeState(o *scanOptions, rd *vcfscan.Reader, counts *vcfscan.Batch, kept int64,
	samples []string, totals *stats.Totals, rcfg *roh.Config, rres *roh.Result, ped []string, wall float64) error {
	st, err := f.identity(o)
	if err != nil {
		return err
	}
	st.InputFormat = rd.Format().String()
	st.SamplesInFile = rd.Header().Samples
	st.Samples = samples
	st.ContigOrder = f.contigOrder
	for _, c := range rd.Header().Contigs[f.nHeader:] {
		st.ExtraContigs = append(st.ExtraContigs, c.Name)
	}
	st.Read, st.Kept, st.Masked = counts.Read, kept, counts.Masked
	st.Skipped = counts.Skipped[:]
	st.Warnings = rd.Warnings()
	st.Totals, st.ROH, st.ROHConfig, st.Pedigree = totals, rres, rcfg, ped
	if f.pc != nil {
		pieces, excl := f.pc.Pieces(rd.Header().Contigs)
		st.Pieces = pieces
		if rres.Excluded == nil {
			rres.Excluded = map[string]int64{}
		}
		for k, v := range excl {
			rres.Excluded[k] += v
		}
	}
	if st.ROHConfig != nil {
		c := *st.ROHConfig
		c.Threads = 0
		st.ROHConfig = &c
	}
	sites := filepath.Join(o.out, "sites.tsv.gz")
	st.SitesFile = relTo(f.stateOut, sites)
	if st.SitesSHA256, err = fileSHA256(sites); err != nil {
		return err
	}
	if pop := filepath.Join(o.out, "sites_by_population.tsv.gz"); totals.HasPopulations() {
		st.PopSitesFile = relTo(f.stateOut, pop)
		if st.PopSHA256, err = fileSHA256(pop); err != nil {
			return err
		}
	}
	st.WallSeconds = wall
	return writeStateFile(f.stateOut, st)
}
