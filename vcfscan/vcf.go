package vcfscan

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"math"
	"strconv"
	"unsafe"
)

// This file parses VCF data lines (VCF 4.1-4.4, section 1.6 "Data lines")
// into batches. A worker owns one vcfParser and parses whole chunks of
// lines; nothing here allocates per record or per sample once the batch
// buffers have grown to their working size.

// warnKind enumerates the warnings counted while parsing.
type warnKind int

const (
	warnHaploid warnKind = iota
	warnPolyploid
	warnBlankLine
	warnContigNotInHeader
	warnLikMissing
	numWarnKinds
)

var warnNames = [...]string{"haploid_calls", "polyploid_calls_as_missing", "blank_lines", "contig_not_in_header", "likelihoods_with_missing_values_as_missing"}

// chromBlock is a run of consecutive records on one chromosome in a chunk.
type chromBlock struct {
	id                  int // contig id, or -(k+1) for the chunk's k-th new name
	firstPos, lastPos   int64
	firstLine, lastLine int64
}

// unsortedAt records the first position decrease inside a chunk.
type unsortedAt struct {
	line        int64
	chrom       int
	prev, pos   int64
	prevLineRel int64
}

// batchState is the per-batch bookkeeping that the ordered stage of the
// reader finishes (line numbers, new contigs, sortedness, warnings).
type batchState struct {
	lines     int64
	newChroms [][]byte
	blocks    []chromBlock
	unsorted  *unsortedAt
	unsortedV unsortedAt
	warn      [numWarnKinds]int64
	warnLine  [numWarnKinds]int64
	err       error
	done      chan struct{}
	terminal  bool
	data      []byte // the text of the chunk, inside Batch.arena
}

func (st *batchState) reset() {
	st.lines = 0
	st.newChroms = st.newChroms[:0]
	st.blocks = st.blocks[:0]
	st.unsorted = nil
	st.warn = [numWarnKinds]int64{}
	st.warnLine = [numWarnKinds]int64{}
	st.err = nil
	st.terminal = false
	st.data = nil
}

func (st *batchState) addWarn(k warnKind, line int64, n int64) {
	if st.warn[k] == 0 {
		st.warnLine[k] = line
	}
	st.warn[k] += n
}

// allele class of a GT byte for the fast path: '0', '1', '.', other.
var alleleClass = func() (t [256]uint8) {
	for i := range t {
		t[i] = 3
	}
	t['0'], t['1'], t['.'] = 0, 1, 2
	return
}()

const slowGT Geno = 255

// gt3 maps the classes of the two alleles of a diploid call to its code.
var gt3 = [4][4]Geno{
	{HomRef, Heterozygous, Missing, slowGT},
	{Heterozygous, HomAlt, Missing, slowGT},
	{Missing, Missing, Missing, slowGT},
	{slowGT, slowGT, slowGT, slowGT},
}

var isACGT = func() (t [256]bool) {
	for _, c := range "ACGTacgt" {
		t[c] = true
	}
	return
}()

// regionFilter says whether [lo, hi] on chrom overlaps a requested region.
type regionFilter interface {
	overlaps(chrom string, lo, hi int64) bool
}

// vcfParser is a worker's parser state. The fields above the format cache
// are shared read-only between workers.
type vcfParser struct {
	name      string
	opt       *Options
	nFile     int     // sample columns in the file
	dest      []int32 // file column -> output position, -1 to drop; nil = identity
	nOut      int
	samples   []string // file sample names, for messages
	contigs   map[string]int
	regions   regionFilter
	hasFormat bool

	// FORMAT cache
	fmtBuf                            []byte
	fmtValid                          bool
	gtIdx, dpIdx, gqIdx, plIdx, glIdx int
	likIdx                            int // plIdx, else glIdx
	lastKey                           int // highest FORMAT index the general decoder needs

	st *batchState
}

func (p *vcfParser) errf(line int64, sentinel error, field, format string, args ...any) error {
	return &ParseError{File: p.name, Line: line, Offset: -1, Record: -1, Field: field,
		Err: fmt.Errorf("%w: %s", sentinel, fmt.Sprintf(format, args...))}
}

// parseChunk parses data, which holds whole lines each ending in '\n'.
// Line numbers in records and errors are relative to the chunk (1-based);
// the reader adds the chunk's base.
func (p *vcfParser) parseChunk(b *Batch, data []byte) error {
	st := p.st
	var lineNo int64
	fused := p.nFile > 0 && p.regions == nil && p.opt.MinDP <= 0 && p.opt.MinGQ <= 0
	for len(data) > 0 {
		if fused {
			used, ok, err := p.fastLine(b, data, lineNo+1)
			if ok {
				lineNo++
				if err != nil {
					st.lines = lineNo
					return err
				}
				if n := lineLen(data[:used]); n > p.opt.Limits.MaxLineBytes {
					st.lines = lineNo
					return p.errf(lineNo, ErrLimit, "line", "line of %d bytes is longer than the limit of %d; raise --guard-line-bytes if the file is genuine", n, p.opt.Limits.MaxLineBytes)
				}
				data = data[used:]
				continue
			}
		}
		nl := bytes.IndexByte(data, '\n')
		var line []byte
		if nl < 0 {
			line, data = data, nil
		} else {
			line, data = data[:nl], data[nl+1:]
		}
		lineNo++
		if n := len(line); n > 0 && line[n-1] == '\r' {
			line = line[:n-1]
		}
		if len(line) == 0 {
			st.addWarn(warnBlankLine, lineNo, 1)
			continue
		}
		if len(line) > p.opt.Limits.MaxLineBytes {
			st.lines = lineNo
			return p.errf(lineNo, ErrLimit, "line", "line of %d bytes is longer than the limit of %d; raise --guard-line-bytes if the file is genuine", len(line), p.opt.Limits.MaxLineBytes)
		}
		if err := p.parseLine(b, line, lineNo); err != nil {
			st.lines = lineNo
			return err
		}
	}
	st.lines = lineNo
	return nil
}

// lineLen is the length of a line without its "\n" or "\r\n" ending.
func lineLen(l []byte) int {
	n := len(l)
	if n > 0 && l[n-1] == '\n' {
		n--
	}
	if n > 0 && l[n-1] == '\r' {
		n--
	}
	return n
}

// fastLine handles the common line in one pass: a biallelic SNP kept by
// the policy whose FORMAT starts with GT, when nothing but GT is needed.
// It decodes the calls while looking for the end of the line, so the
// bytes are read once. For any other line it returns ok=false having
// changed nothing, and the caller takes the general path. used counts the
// bytes of the line including its newline.
func (p *vcfParser) fastLine(b *Batch, data []byte, lineNo int64) (used int, ok bool, err error) {
	if data[0] == '#' {
		return 0, false, nil
	}
	var tabs [9]int
	off := 0
	for k := range tabs {
		t := bytes.IndexByte(data[off:], '\t')
		if t < 0 {
			return 0, false, nil
		}
		off += t
		tabs[k] = off
		off++
	}
	if bytes.IndexByte(data[:off], '\n') >= 0 {
		return 0, false, nil
	}
	chrom := data[:tabs[0]]
	posF := data[tabs[0]+1 : tabs[1]]
	ref := data[tabs[2]+1 : tabs[3]]
	alt := data[tabs[3]+1 : tabs[4]]
	filter := data[tabs[5]+1 : tabs[6]]
	if len(chrom) == 0 || len(ref) != 1 || len(alt) != 1 || !isACGT[ref[0]] || !isACGT[alt[0]] {
		return 0, false, nil
	}
	if !p.opt.IncludeFiltered && !(len(filter) == 1 && filter[0] == '.') && string(filter) != "PASS" {
		return 0, false, nil
	}
	pos, okPos := parsePos(posF)
	if !okPos {
		return 0, false, nil
	}
	p.parseFormat(data[tabs[7]+1 : tabs[8]])
	if p.gtIdx != 0 || (p.opt.WantPL && (p.plIdx >= 0 || p.glIdx >= 0)) || (p.opt.WantDP && p.dpIdx >= 0) {
		return 0, false, nil
	}
	b.Read++
	id := p.chromID(chrom)
	p.st.track(id, pos, lineNo)
	ri := len(b.Records)
	b.Records = append(b.Records, Record{
		ChromID: id, Pos: pos, Ref: ref, Alt: alt, ID: data[tabs[1]+1 : tabs[2]], Filter: filter,
		InfoValue: NaN, Line: lineNo,
	})
	if p.opt.InfoKey != "" {
		b.Records[ri].InfoValue = infoValue(data[tabs[6]+1:tabs[7]], p.opt.InfoKey)
	}
	if p.opt.WantPL {
		b.HasPL = append(b.HasPL, false)
		plRoom(b, ri, p.nOut, false)
	}
	if p.opt.WantDP {
		b.HasDP = append(b.HasDP, false)
		dpRoom(b, ri, p.nOut, false)
	}
	base := len(b.GT)
	b.GT = growGeno(b.GT, p.nOut)
	n, err := p.fusedSamples(b.GT[base:base+p.nOut], data[off:], lineNo)
	return off + n, true, err
}

// fusedSamples decodes the sample columns at the start of s up to the end
// of the line ('\n' or the end of s) and returns the bytes used, newline
// included.
func (p *vcfParser) fusedSamples(gt []Geno, s []byte, lineNo int64) (int, error) {
	n := len(s)
	i := 0
	dest := p.dest
	nFile := p.nFile
	for j := 0; j < nFile; j++ {
		if dest == nil {
			for j+2 <= nFile && i+8 <= n {
				w := binary.LittleEndian.Uint64(s[i:])
				if m := w & pairSepMask; m != pairPhased && m != pairUnphased {
					break
				}
				c0 := gtPair[(w&0xff)|(w>>8)&0xff00]
				c1 := gtPair[(w>>32)&0xff|(w>>40)&0xff00]
				if c0 == slowGT || c1 == slowGT {
					break
				}
				gt[j], gt[j+1] = c0, c1
				i += 8
				j += 2
			}
			if j >= nFile {
				break
			}
		}
		if i+4 <= n {
			w := binary.LittleEndian.Uint32(s[i:])
			if byte(w>>24) == '\t' && isPhaseSep[byte(w>>8)] {
				if code := gt3[alleleClass[byte(w)]][alleleClass[byte(w>>16)]]; code != slowGT {
					if dest == nil {
						gt[j] = code
					} else if o := dest[j]; o >= 0 {
						gt[o] = code
					}
					i += 4
					continue
				}
			}
		}
		e := i
		for e < n && s[e] != '\t' && s[e] != '\n' {
			e++
		}
		lineEnds := e == n || s[e] == '\n'
		g := s[i:e]
		if lineEnds && len(g) > 0 && g[len(g)-1] == '\r' {
			g = g[:len(g)-1]
		}
		if c := bytes.IndexByte(g, ':'); c >= 0 {
			g = g[:c]
		}
		code := slowGT
		if len(g) == 3 && isPhaseSep[g[1]] {
			code = gt3[alleleClass[g[0]]][alleleClass[g[2]]]
		}
		if code == slowGT {
			var err error
			if code, err = p.parseGT(g, lineNo, j); err != nil {
				return 0, err
			}
		}
		if dest == nil {
			gt[j] = code
		} else if o := dest[j]; o >= 0 {
			gt[o] = code
		}
		if lineEnds {
			if j != nFile-1 {
				return 0, p.errf(lineNo, ErrSampleCount, "samples", "expected %d sample columns as in the #CHROM line, found %d", nFile, j+1)
			}
			return min(e+1, n), nil
		}
		i = e + 1
	}
	// The last sample column was followed by a tab: count the extra ones.
	end := n
	if k := bytes.IndexByte(s[i:], '\n'); k >= 0 {
		end = i + k
	}
	return 0, p.errf(lineNo, ErrSampleCount, "samples", "expected %d sample columns as in the #CHROM line, found %d", nFile, nFile+bytes.Count(s[i:end], []byte{'\t'})+1)
}

// cut returns the field up to the next tab, the rest after it, and whether
// a tab was found.
func cut(s []byte) (field, rest []byte, found bool) {
	if i := bytes.IndexByte(s, '\t'); i >= 0 {
		return s[:i], s[i+1:], true
	}
	return s, nil, false
}

var colNames = [...]string{"CHROM", "POS", "ID", "REF", "ALT", "QUAL", "FILTER", "INFO"}

func (p *vcfParser) parseLine(b *Batch, line []byte, lineNo int64) error {
	b.Read++
	if line[0] == '#' {
		return p.errf(lineNo, ErrMalformed, "CHROM", "header line %q among the data lines; header lines must come before #CHROM", clip(line))
	}
	var f [8][]byte
	rest := line
	found := true
	for i := 0; i < 8; i++ {
		if !found {
			return p.errf(lineNo, ErrMalformed, colNames[i], "line has %d tab-separated columns, expected at least 8 (CHROM to INFO); are the columns separated by spaces?", i)
		}
		f[i], rest, found = cut(rest)
	}
	chrom, posF, ref, alt, filter := f[0], f[1], f[3], f[4], f[6]
	if len(chrom) == 0 {
		return p.errf(lineNo, ErrMalformed, "CHROM", "empty chromosome name")
	}
	pos, ok := parsePos(posF)
	if !ok {
		return p.errf(lineNo, ErrMalformed, "POS", "expected a non-negative integer position, found %q", clip(posF))
	}
	if len(ref) == 0 {
		return p.errf(lineNo, ErrMalformed, "REF", "empty reference allele")
	}
	if len(alt) == 0 {
		return p.errf(lineNo, ErrMalformed, "ALT", "empty ALT column; write \".\" when there is no alternate allele")
	}

	// Columns after INFO: FORMAT and the samples.
	var format, samp []byte
	hasSamples := false
	if found {
		format, samp, hasSamples = cut(rest)
	}
	if p.nFile == 0 {
		if hasSamples {
			return p.errf(lineNo, ErrSampleCount, "FORMAT", "the header names no samples but this line has %d sample columns", bytes.Count(samp, []byte{'\t'})+1)
		}
	} else if !hasSamples {
		return p.errf(lineNo, ErrSampleCount, "FORMAT", "expected FORMAT and %d sample columns after INFO, found none", p.nFile)
	}

	id := p.chromID(chrom)
	p.st.track(id, pos, lineNo)

	reason := SkipReason(-1)
	switch {
	case p.regions != nil && !p.regions.overlaps(string(chrom), pos, regionEnd(pos, ref, p.opt.RegionsByStart)):
		reason = SkipOutsideRegion
	case bytes.IndexByte(alt, ',') >= 0:
		if n := bytes.Count(alt, []byte{','}) + 2; n > p.opt.Limits.MaxAlleles {
			return p.errf(lineNo, ErrLimit, "ALT", "%d alleles, more than the limit of %d; raise --guard-alleles if the file is genuine", n, p.opt.Limits.MaxAlleles)
		}
		reason = SkipMultiallelic
	case isSymbolic(alt):
		reason = SkipSymbolic
	case len(ref) != 1 || len(alt) != 1 || !isACGT[ref[0]] || !isACGT[alt[0]]:
		reason = SkipIndel
	case !p.opt.IncludeFiltered && !(len(filter) == 1 && filter[0] == '.') && string(filter) != "PASS":
		reason = SkipFiltered
	case p.nFile == 0:
		reason = SkipNoGT
	}
	if reason < 0 {
		p.parseFormat(format)
		if p.gtIdx < 0 {
			reason = SkipNoGT
		}
	}
	if reason >= 0 {
		if p.nFile > 0 {
			if n := bytes.Count(samp, []byte{'\t'}) + 1; n != p.nFile {
				return p.errf(lineNo, ErrSampleCount, "samples", "expected %d sample columns as in the #CHROM line, found %d", p.nFile, n)
			}
		}
		b.Skipped[reason]++
		return nil
	}

	// Kept: a biallelic SNP with genotypes.
	ri := len(b.Records)
	b.Records = append(b.Records, Record{
		ChromID: id, Pos: pos, Ref: ref, Alt: alt, ID: f[2], Filter: filter,
		InfoValue: NaN, Line: lineNo,
	})
	if p.opt.InfoKey != "" {
		b.Records[ri].InfoValue = infoValue(f[7], p.opt.InfoKey)
	}
	base := len(b.GT)
	b.GT = growGeno(b.GT, p.nOut)
	gt := b.GT[base : base+p.nOut]
	var pl []uint16
	wantPL := p.opt.WantPL
	if wantPL {
		has := p.plIdx >= 0 || p.glIdx >= 0
		b.HasPL = append(b.HasPL, has)
		pl = plRoom(b, ri, p.nOut, has)
		wantPL = has
	}
	var dp []int32
	if p.opt.WantDP {
		has := p.dpIdx >= 0
		b.HasDP = append(b.HasDP, has)
		dp = dpRoom(b, ri, p.nOut, has)
	}
	if p.gtIdx == 0 && !wantPL && dp == nil && p.opt.MinDP <= 0 && p.opt.MinGQ <= 0 {
		return p.fastSamples(gt, samp, lineNo)
	}
	return p.slowSamples(b, gt, pl, wantPL, dp, samp, lineNo)
}

// fastSamples decodes sample columns whose first FORMAT key is GT and
// nothing else is needed, with the same word-at-a-time decoder as the
// one-pass path (samp holds the sample columns of one line).
func (p *vcfParser) fastSamples(gt []Geno, samp []byte, lineNo int64) error {
	_, err := p.fusedSamples(gt, samp, lineNo)
	return err
}

var isPhaseSep = [256]bool{'/': true, '|': true}

// Separator bytes of two calls read as one little-endian word.
const (
	pairSepMask  = 0xff00ff00ff00ff00
	pairPhased   = uint64('|')<<8 | uint64('\t')<<24 | uint64('|')<<40 | uint64('\t')<<56
	pairUnphased = uint64('/')<<8 | uint64('\t')<<24 | uint64('/')<<40 | uint64('\t')<<56
)

// gtPair maps first allele | second allele<<8 to the call code.
var gtPair = func() *[65536]Geno {
	var t [65536]Geno
	for i := range t {
		t[i] = gt3[alleleClass[byte(i)]][alleleClass[byte(i>>8)]]
	}
	return &t
}()

// slowSamples decodes sample columns with GT anywhere in FORMAT, masking
// by DP/GQ and decoding PL/GL and (dp not nil) DP.
func (p *vcfParser) slowSamples(b *Batch, gt []Geno, pl []uint16, wantPL bool, dp []int32, samp []byte, lineNo int64) error {
	n := len(samp)
	i := 0
	minDP, minGQ := float64(p.opt.MinDP), float64(p.opt.MinGQ)
	for j := 0; j < p.nFile; j++ {
		if i > n {
			return p.errf(lineNo, ErrSampleCount, "samples", "expected %d sample columns as in the #CHROM line, found %d", p.nFile, j)
		}
		end := n
		if k := bytes.IndexByte(samp[i:], '\t'); k >= 0 {
			end = i + k
		}
		field := samp[i:end]
		i = end + 1
		o := j
		if p.dest != nil {
			o = int(p.dest[j])
			if o < 0 {
				continue
			}
		}
		// One walk over the field's values picks GT, DP, GQ and PL/GL.
		var gtV, dpV, gqV, likV []byte
		rest := field
		for k := 0; k <= p.lastKey; k++ {
			v := rest
			if c := bytes.IndexByte(rest, ':'); c >= 0 {
				v, rest = rest[:c], rest[c+1:]
			} else {
				rest = nil
			}
			switch k {
			case p.gtIdx:
				gtV = v
			case p.dpIdx:
				dpV = v
			case p.gqIdx:
				gqV = v
			case p.likIdx:
				likV = v
			}
			if rest == nil {
				break
			}
		}
		code := slowGT
		if len(gtV) == 3 && isPhaseSep[gtV[1]] {
			code = gt3[alleleClass[gtV[0]]][alleleClass[gtV[2]]]
		}
		if code == slowGT {
			var err error
			if code, err = p.parseGT(gtV, lineNo, j); err != nil {
				return err
			}
		}
		if wantPL {
			if err := p.likelihoods(pl[3*o:3*o+3], likV, code, lineNo, j); err != nil {
				return err
			}
		}
		if dp != nil {
			dp[o] = -1
			if v, ok := parseNum(dpV); ok && v >= 0 && v <= math.MaxInt32 {
				dp[o] = int32(v)
			}
		}
		if code != Missing && (minDP > 0 || minGQ > 0) {
			masked := false
			if minDP > 0 {
				if v, ok := parseNum(dpV); ok && v < minDP {
					masked = true
				}
			}
			if minGQ > 0 {
				if v, ok := parseNum(gqV); ok && v < minGQ {
					masked = true
				}
			}
			if masked {
				code = Missing
				b.Masked++
				if wantPL {
					clear(pl[3*o : 3*o+3]) // masked: no information
				}
			}
		}
		gt[o] = code
	}
	if i <= n {
		return p.errf(lineNo, ErrSampleCount, "samples", "expected %d sample columns as in the #CHROM line, found %d", p.nFile, p.nFile+bytes.Count(samp[i:], []byte{'\t'})+1)
	}
	return nil
}

// parseGT decodes one GT value of a biallelic record (VCF 4.4 section
// 1.6.2: alleles separated by / or |, "." for a missing allele, an
// optional leading phasing character). Any missing allele gives Missing;
// one allele gives a haploid code; more than two gives Missing and a
// warning.
func (p *vcfParser) parseGT(s []byte, lineNo int64, col int) (Geno, error) {
	if len(s) == 0 || (len(s) == 1 && s[0] == '.') {
		return Missing, nil
	}
	i := 0
	if s[0] == '/' || s[0] == '|' {
		i = 1
	}
	ploidy, alts, miss := 0, 0, 0
	for {
		if i >= len(s) {
			return 0, p.gtErr(s, lineNo, col, "an allele is missing after a separator")
		}
		if s[i] == '.' {
			miss++
			i++
		} else {
			start := i
			idx := 0
			for i < len(s) && s[i] >= '0' && s[i] <= '9' {
				if idx < 1<<20 {
					idx = idx*10 + int(s[i]-'0')
				}
				i++
			}
			if i == start {
				return 0, p.gtErr(s, lineNo, col, "expected an allele number or '.'")
			}
			if idx > 1 {
				return 0, p.gtErr(s, lineNo, col, fmt.Sprintf("allele %d is used but ALT lists only 1 allele", idx))
			}
			alts += idx
		}
		ploidy++
		if i == len(s) {
			break
		}
		if s[i] != '/' && s[i] != '|' {
			return 0, p.gtErr(s, lineNo, col, "expected '/' or '|' between alleles")
		}
		i++
	}
	switch {
	case ploidy == 1:
		p.st.addWarn(warnHaploid, lineNo, 1)
		switch {
		case miss > 0:
			return Missing, nil
		case alts > 0:
			return HaploidAlt, nil
		}
		return HaploidRef, nil
	case ploidy > 2:
		p.st.addWarn(warnPolyploid, lineNo, 1)
		return Missing, nil
	case miss > 0:
		return Missing, nil
	}
	return Geno(alts), nil
}

func (p *vcfParser) gtErr(s []byte, lineNo int64, col int, msg string) error {
	name := ""
	if col < len(p.samples) {
		name = p.samples[col]
	}
	return p.errf(lineNo, ErrMalformed, "GT", "sample %q: genotype %q: %s", name, clip(s), msg)
}

// parseFormat finds the keys of interest in FORMAT, reusing the previous
// result when FORMAT did not change.
func (p *vcfParser) parseFormat(format []byte) {
	if p.fmtValid && bytes.Equal(format, p.fmtBuf) {
		return
	}
	p.fmtBuf = append(p.fmtBuf[:0], format...)
	p.fmtValid = true
	p.gtIdx, p.dpIdx, p.gqIdx, p.plIdx, p.glIdx = -1, -1, -1, -1, -1
	k := 0
	for len(format) > 0 {
		key := format
		if c := bytes.IndexByte(format, ':'); c >= 0 {
			key, format = format[:c], format[c+1:]
		} else {
			format = nil
		}
		switch string(key) {
		case "GT":
			p.gtIdx = k
		case "DP":
			p.dpIdx = k
		case "GQ":
			p.gqIdx = k
		case "PL":
			p.plIdx = k
		case "GL":
			p.glIdx = k
		}
		k++
	}
	p.likIdx = p.plIdx
	if p.likIdx < 0 {
		p.likIdx = p.glIdx
	}
	p.lastKey = max(p.gtIdx, p.likIdx)
	if p.opt.MinDP > 0 || p.opt.WantDP {
		p.lastKey = max(p.lastKey, p.dpIdx)
	}
	if p.opt.MinGQ > 0 {
		p.lastKey = max(p.lastKey, p.gqIdx)
	}
}

// subfield returns the k-th ':'-separated value of a sample field, or nil
// when the field has fewer values (trailing values may be dropped, VCF
// 4.4 section 1.6.2).
func subfield(field []byte, k int) []byte {
	for ; k > 0; k-- {
		c := bytes.IndexByte(field, ':')
		if c < 0 {
			return nil
		}
		field = field[c+1:]
	}
	if c := bytes.IndexByte(field, ':'); c >= 0 {
		return field[:c]
	}
	return field
}

// likelihoods decodes the PL or GL value s of file sample col into dst
// (decodeLikelihoods); a value that breaks the VCF specification is an
// error naming the line, and "." elements are counted and stored as
// missing.
func (p *vcfParser) likelihoods(dst []uint16, s []byte, code Geno, lineNo int64, col int) error {
	gl := p.plIdx < 0
	missing, problem := decodeLikelihoods(dst, s, gl, code)
	if missing {
		p.st.addWarn(warnLikMissing, lineNo, 1)
	}
	if problem == "" {
		return nil
	}
	key := "PL"
	if gl {
		key = "GL"
	}
	name := ""
	if col < len(p.samples) {
		name = p.samples[col]
	}
	return p.errf(lineNo, ErrMalformed, key, "sample %q: %s %q: %s", name, key, clip(s), problem)
}

// decodeLikelihoods fills dst (0/0, 0/1, 1/1) from a PL value (VCF 4.4
// section 1.6.2: Number=G, Integer, phred-scaled), or from GL (log10
// likelihoods, Float) converted to phred as round(-10*GL), for a call
// coded code. A haploid list of two values is stored as (R, 65535, A).
// An absent value or "." gives zeros (no information).
//
// The specification allows "." for single missing values: a list with one
// is stored as zeros and reported with missing set. Anything else it does
// not allow is a problem (returned as text, dst zeros): a value that is
// not a number, a PL that is negative or not an integer, a GL above 0,
// and a count that does not match the call's ploidy (3 for a diploid
// call, 2 for a haploid one; a missing call may carry either, and other
// counts, as for polyploid calls, are stored as zeros). Values too large
// for 16 bits are stored relative to the smallest of the call and capped
// at 65534: beyond phred 3240 the likelihood is below the smallest
// float64, so the cap loses nothing.
func decodeLikelihoods(dst []uint16, s []byte, gl bool, code Geno) (missing bool, problem string) {
	if !gl && (code <= HomAlt || code == Missing) {
		if v, ok := plTriple(s); ok {
			dst[0], dst[1], dst[2] = v[0], v[1], v[2]
			return false, ""
		}
	}
	return decodeLikelihoodsGeneral(dst, s, gl, code)
}

// plTriple is the fast path of decodeLikelihoods: three PL integers of at
// most five digits and at most maxPhred each (what callers write), which
// the general path would store unchanged. ok is false for anything else.
func plTriple(s []byte) (v [3]uint16, ok bool) {
	k, digits := 0, 0
	x := uint32(0)
	for _, c := range s {
		switch {
		case c >= '0' && c <= '9':
			x = x*10 + uint32(c-'0')
			digits++
			if digits > 5 {
				return v, false
			}
		case c == ',' && digits > 0 && k < 2 && x <= maxPhred:
			v[k] = uint16(x)
			k++
			x, digits = 0, 0
		default:
			return v, false
		}
	}
	if k != 2 || digits == 0 || x > maxPhred {
		return v, false
	}
	v[2] = uint16(x)
	return v, true
}

// decodeLikelihoodsGeneral is decodeLikelihoods for any value.
func decodeLikelihoodsGeneral(dst []uint16, s []byte, gl bool, code Geno) (missing bool, problem string) {
	dst[0], dst[1], dst[2] = 0, 0, 0
	if len(s) == 0 || (len(s) == 1 && s[0] == '.') {
		return false, ""
	}
	var v [3]float64
	n := 0
	for s != nil {
		item := s
		if c := bytes.IndexByte(s, ','); c >= 0 {
			item, s = s[:c], s[c+1:]
		} else {
			s = nil
		}
		n++
		if len(item) == 1 && item[0] == '.' {
			missing = true
			continue
		}
		x, ok := parseNum(item)
		if !ok || x != x {
			return false, fmt.Sprintf("value %q is not a number", clip(item))
		}
		if problem := likValueProblem(x, gl); problem != "" {
			return false, problem
		}
		if n <= 3 {
			v[n-1] = x
		}
	}
	return storeLikelihoods(dst, &v, n, missing, gl, code)
}

// likValueProblem checks one likelihood value.
func likValueProblem(x float64, gl bool) string {
	switch {
	case x != x:
		return "a value is not a number"
	case gl && x > 0:
		return fmt.Sprintf("GL value %v is above 0 (a log10 likelihood is at most 0)", x)
	case !gl && x < 0:
		return fmt.Sprintf("PL value %v is negative (phred-scaled likelihoods are at least 0)", x)
	case !gl && (math.IsInf(x, 0) || x != math.Trunc(x)):
		return fmt.Sprintf("PL value %v is not an integer", x)
	}
	return ""
}

// storeLikelihoods checks the count n of one call's values against its
// ploidy and stores the first three of v (PL, or GL when gl) as phred
// integers in dst (see decodeLikelihoods). missing says a value was ".".
func storeLikelihoods(dst []uint16, v *[3]float64, n int, missing, gl bool, code Geno) (bool, string) {
	if n == 1 && missing {
		return false, "" // the whole value is missing (BCF: missing, then end of vector)
	}
	switch code {
	case HomRef, Heterozygous, HomAlt:
		if n != 3 {
			return false, fmt.Sprintf("%d values for a diploid call of a biallelic site, want 3", n)
		}
	case HaploidRef, HaploidAlt:
		if n != 2 {
			return false, fmt.Sprintf("%d values for a haploid call of a biallelic site, want 2", n)
		}
	default:
		if n != 2 && n != 3 {
			return false, "" // ploidy unknown or above 2: no diploid likelihoods
		}
	}
	if missing {
		return true, ""
	}
	if n == 2 {
		v[2] = v[1]
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for k := range v {
		if gl {
			v[k] = math.Round(-10 * v[k])
		}
		lo, hi = min(lo, v[k]), max(hi, v[k])
	}
	if math.IsInf(lo, 1) {
		return false, "" // every genotype impossible: no information
	}
	if hi > maxPhred {
		for k := range v {
			v[k] -= lo
		}
	}
	for k := range v {
		dst[k] = uint16(min(v[k], maxPhred))
	}
	if n == 2 {
		dst[1] = math.MaxUint16
	}
	return false, ""
}

// maxPhred is the largest likelihood stored; 65535 marks a haploid pair.
const maxPhred = math.MaxUint16 - 1

func clampU16(x float64) uint16 {
	switch {
	case x <= 0 || x != x:
		return 0
	case x >= math.MaxUint16:
		return math.MaxUint16
	}
	return uint16(x)
}

// parseNum parses a decimal number without allocating; ok is false for
// "." and anything that is not a number.
func parseNum(s []byte) (float64, bool) {
	if len(s) == 0 || len(s) > 64 || (len(s) == 1 && s[0] == '.') {
		return 0, false
	}
	// Fast path: optional '-', digits, optional '.digits', at most 15
	// digits. The integer mantissa and the power of ten are exact in
	// float64, so one division rounds correctly and the result equals
	// strconv.ParseFloat's (summing digit*0.1^k does not: "2.95" gave
	// 2.9499999999999997, and GL -2.95 became phred 29 instead of 30).
	i, neg := 0, false
	if s[0] == '-' {
		neg, i = true, 1
	}
	var m uint64
	digits, frac := 0, 0
	for ; i < len(s) && s[i] >= '0' && s[i] <= '9'; i++ {
		m = m*10 + uint64(s[i]-'0')
		digits++
	}
	if i < len(s) && s[i] == '.' {
		i++
		for ; i < len(s) && s[i] >= '0' && s[i] <= '9'; i++ {
			m = m*10 + uint64(s[i]-'0')
			digits++
			frac++
		}
	}
	if i == len(s) && digits > 0 && digits <= 15 {
		v := float64(m) / exactPow10[frac]
		if neg {
			v = -v
		}
		return v, true
	}
	x, err := strconv.ParseFloat(unsafe.String(&s[0], len(s)), 64)
	if err != nil {
		return 0, false
	}
	return x, true
}

// exactPow10 holds the powers of ten that float64 represents exactly.
var exactPow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// parsePos parses POS.
func parsePos(s []byte) (int64, bool) {
	if len(s) == 0 || len(s) > 18 {
		return 0, false
	}
	var v int64
	for _, c := range s {
		if c < '0' || c > '9' {
			return 0, false
		}
		v = v*10 + int64(c-'0')
	}
	return v, true
}

// isSymbolic reports ALT values that are not bases: "<...>", breakends,
// "*", "." and single breakends like ".A" or "A.".
func isSymbolic(alt []byte) bool {
	return alt[0] == '<' || alt[0] == '.' || alt[0] == '*' || alt[len(alt)-1] == '.' ||
		bytes.IndexByte(alt, '[') >= 0 || bytes.IndexByte(alt, ']') >= 0
}

// infoValue returns the first value of key in an INFO column as float, 1
// for a flag, NaN when absent or not numeric.
func infoValue(info []byte, key string) float64 {
	for len(info) > 0 {
		item := info
		if c := bytes.IndexByte(info, ';'); c >= 0 {
			item, info = info[:c], info[c+1:]
		} else {
			info = nil
		}
		if len(item) < len(key) || string(item[:len(key)]) != key {
			continue
		}
		if len(item) == len(key) {
			return 1
		}
		if item[len(key)] != '=' {
			continue
		}
		v := item[len(key)+1:]
		if c := bytes.IndexByte(v, ','); c >= 0 {
			v = v[:c]
		}
		if x, ok := parseNum(v); ok {
			return x
		}
		return NaN
	}
	return NaN
}

// chromID returns the contig id of name, or a negative chunk-local id for
// a name the header does not declare.
func (p *vcfParser) chromID(name []byte) int {
	if id, ok := p.contigs[string(name)]; ok {
		return id
	}
	st := p.st
	for k, n := range st.newChroms {
		if bytes.Equal(n, name) {
			return -(k + 1)
		}
	}
	st.newChroms = append(st.newChroms, name)
	return -len(st.newChroms)
}

// track extends the chromosome blocks of the batch and notes the first
// position that goes backwards within a block; at is the line number (VCF)
// or record index (BCF) of the record.
func (st *batchState) track(id int, pos, at int64) {
	if nb := len(st.blocks); nb > 0 && st.blocks[nb-1].id == id {
		blk := &st.blocks[nb-1]
		if pos < blk.lastPos && st.unsorted == nil {
			st.unsortedV = unsortedAt{line: at, chrom: id, prev: blk.lastPos, pos: pos, prevLineRel: blk.lastLine}
			st.unsorted = &st.unsortedV
		}
		blk.lastPos, blk.lastLine = pos, at
		return
	}
	st.blocks = append(st.blocks, chromBlock{id: id, firstPos: pos, lastPos: pos, firstLine: at, lastLine: at})
}

func growGeno(s []Geno, n int) []Geno {
	need := len(s) + n
	if need > cap(s) {
		t := make([]Geno, len(s), max(need, 2*cap(s)))
		copy(t, s)
		s = t
	}
	return s[:need]
}

// plRoom returns the zeroed likelihood slots of record ri of b (3*nOut
// values), first filling zeros for earlier records of the batch that had
// none. While no record of the batch carries likelihoods (has false) PL
// stays empty and plRoom returns nil: most inputs have only GT, and
// zeros for every call would double the batch.
func plRoom(b *Batch, ri, nOut int, has bool) []uint16 {
	if !has && len(b.PL) == 0 {
		return nil
	}
	old, need := len(b.PL), 3*(ri+1)*nOut
	b.PL = growU16(b.PL, need-old)
	clear(b.PL[old:need])
	return b.PL[3*ri*nOut : need]
}

// dpRoom is plRoom for Batch.DP: one depth per call, -1 (missing) for the
// records of the batch without DP.
func dpRoom(b *Batch, ri, nOut int, has bool) []int32 {
	if !has && len(b.DP) == 0 {
		return nil
	}
	old, need := len(b.DP), (ri+1)*nOut
	if need > cap(b.DP) {
		t := make([]int32, old, max(need, 2*cap(b.DP)))
		copy(t, b.DP)
		b.DP = t
	}
	b.DP = b.DP[:need]
	for i := old; i < need; i++ {
		b.DP[i] = -1
	}
	return b.DP[ri*nOut : need]
}

func growU16(s []uint16, n int) []uint16 {
	need := len(s) + n
	if need > cap(s) {
		t := make([]uint16, len(s), max(need, 2*cap(s)))
		copy(t, s)
		s = t
	}
	return s[:need]
}
