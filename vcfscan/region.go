package vcfscan

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"os"
	"sort"
	"strconv"
	"strings"

	"github.com/biogo/hts/bgzf"
)

// Errors of region parsing and index lookup; test with errors.Is.
var (
	ErrBadRegion     = errors.New("bad region")
	ErrNoIndex       = errors.New("no index file next to the data file")
	ErrStaleIndex    = errors.New("index is older than the data file")
	ErrUnknownContig = errors.New("chromosome not in the index or the header")
)

// ParseRegion parses a region written "chrom", "chrom:pos", "chrom:start-end"
// or "chrom:start-" with 1-based inclusive coordinates; thousands separators
// (1,000,000) are accepted. The chromosome is everything before the last
// ':'; a name that itself contains ':' must be given with a range.
func ParseRegion(s string) (Region, error) {
	bad := func(why string) (Region, error) {
		return Region{}, fmt.Errorf("%w %q: %s", ErrBadRegion, s, why)
	}
	s0 := strings.TrimSpace(s)
	if s0 == "" {
		return bad("empty")
	}
	colon := strings.LastIndexByte(s0, ':')
	if colon < 0 {
		return Region{Chrom: s0}, nil
	}
	chrom, rng := s0[:colon], s0[colon+1:]
	if chrom == "" {
		return bad("no chromosome before ':'")
	}
	num := func(t string) (int64, bool) {
		t = strings.ReplaceAll(t, ",", "")
		v, err := strconv.ParseInt(t, 10, 64)
		return v, err == nil
	}
	startS, endS, isRange := strings.Cut(rng, "-")
	start, ok := num(startS)
	if !ok {
		return bad("start is not a whole number")
	}
	if start < 1 {
		return bad("start must be at least 1 (coordinates are 1-based)")
	}
	r := Region{Chrom: chrom, Start: start, End: start}
	if isRange {
		if endS == "" {
			r.End = 0
		} else {
			end, ok := num(endS)
			if !ok {
				return bad("end is not a whole number")
			}
			if end < start {
				return bad("end is before start")
			}
			r.End = end
		}
	}
	return r, nil
}

// ReadRegionList reads a region list file (the FILE of --region @FILE).
// The file may be plain, gzip or BGZF (OpenText tells them apart by
// content). It holds one of two layouts, chosen for the whole file:
//
//   - a region list: one region per line written as for ParseRegion
//     ("chrom", "chrom:pos", "chrom:start-end" or "chrom:start-", 1-based
//     and inclusive), nothing else on the line;
//   - BED (UCSC definition): "chrom<TAB>start<TAB>end[<TAB>...]" with
//     0-based, half-open coordinates; "track" and "browser" lines and
//     columns after the third are ignored.
//
// The file is BED when its name ends in ".bed" or ".bed.gz", or when its
// first line that is not empty or a '#' comment is a "track" or "browser"
// line or has at least three tab-separated fields of which the second and
// third are whole numbers. Empty lines and lines starting with '#' are
// skipped in both layouts. Errors name the file and line and wrap
// ErrBadRegion.
func ReadRegionList(path string) ([]Region, error) {
	f, err := OpenText(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	lower := strings.ToLower(path)
	return readRegions(f, path, strings.HasSuffix(lower, ".bed") || strings.HasSuffix(lower, ".bed.gz"))
}

// looksLikeBED reports whether a region list's first data line is BED.
func looksLikeBED(text string) bool {
	if f := strings.Fields(text); f[0] == "track" || f[0] == "browser" {
		return true
	}
	f := strings.Split(text, "\t")
	if len(f) < 3 {
		return false
	}
	for _, t := range f[1:3] {
		if _, err := strconv.ParseInt(strings.TrimSpace(t), 10, 64); err != nil {
			return false
		}
	}
	return true
}

// readRegions reads a region list (see ReadRegionList); bed forces BED,
// otherwise the first data line decides.
func readRegions(r io.Reader, name string, bed bool) ([]Region, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 4096), 1<<20)
	var out []Region
	line := 0
	decided := bed
	for sc.Scan() {
		line++
		text := strings.TrimSpace(sc.Text())
		if text == "" || text[0] == '#' {
			continue
		}
		if !decided {
			bed, decided = looksLikeBED(text), true
		}
		fields := strings.Fields(text)
		if bed && (fields[0] == "track" || fields[0] == "browser") {
			continue
		}
		bad := func(why string) error {
			return fmt.Errorf("%s:%d: %w: %s", name, line, ErrBadRegion, why)
		}
		if !bed {
			if len(fields) != 1 {
				return nil, bad("a region list line holds one region written as for --region (chrom, chrom:pos or chrom:start-end); a BED file needs chrom, start and end separated by tabs")
			}
			reg, err := ParseRegion(fields[0])
			if err != nil {
				return nil, fmt.Errorf("%s:%d: %w", name, line, err)
			}
			out = append(out, reg)
			continue
		}
		num := func(t string) (int64, error) {
			v, err := strconv.ParseInt(t, 10, 64)
			if err != nil {
				return 0, bad(fmt.Sprintf("%q is not a whole number", t))
			}
			return v, nil
		}
		if len(fields) < 3 {
			return nil, bad("a BED line needs chrom, start and end")
		}
		s, err := num(fields[1])
		if err != nil {
			return nil, err
		}
		e, err := num(fields[2])
		if err != nil {
			return nil, err
		}
		if s < 0 || e <= s {
			return nil, bad("BED start must be >= 0 and end > start (0-based, half-open)")
		}
		out = append(out, Region{Chrom: fields[0], Start: s + 1, End: e})
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s:%d: %w", name, line+1, err)
	}
	return out, nil
}

// regionSet answers whether a position lies in any of a list of regions.
// It is read-only after construction and safe for concurrent use.
type regionSet struct {
	byChrom map[string][]span
}

type span struct{ lo, hi int64 } // 1-based inclusive; hi = maxInt64 for "to the end"

func newRegionSet(regs []Region) *regionSet {
	s := &regionSet{byChrom: map[string][]span{}}
	for _, r := range regs {
		lo, hi := r.Start, r.End
		if lo < 1 {
			lo = 1
		}
		if hi <= 0 {
			hi = 1<<63 - 1
		}
		s.byChrom[r.Chrom] = append(s.byChrom[r.Chrom], span{lo, hi})
	}
	for c, sp := range s.byChrom {
		sort.Slice(sp, func(i, j int) bool { return sp[i].lo < sp[j].lo })
		merged := sp[:1]
		for _, x := range sp[1:] {
			last := &merged[len(merged)-1]
			if x.lo <= last.hi || x.lo-1 == last.hi {
				if x.hi > last.hi {
					last.hi = x.hi
				}
				continue
			}
			merged = append(merged, x)
		}
		s.byChrom[c] = merged
	}
	return s
}

// overlaps reports whether the 1-based inclusive interval [lo, hi] on chrom
// overlaps a region (the test vcfParser.inRegions makes with the REF span).
func (s *regionSet) overlaps(chrom string, lo, hi int64) bool {
	sp := s.byChrom[chrom]
	i := sort.Search(len(sp), func(i int) bool { return sp[i].hi >= lo })
	return i < len(sp) && sp[i].lo <= hi
}

// Largest coordinate a tabix index covers (hts-specs tabix, 2^29).
const tabixMaxPos = 1 << 29

// findIndex returns the index file for data file path: path+".csi" or
// path+".tbi" (for BCF the CSI is tried first, otherwise the TBI). It fails
// with ErrNoIndex when neither exists and ErrStaleIndex when the index was
// last modified in an earlier second than the data file.
func findIndex(path string) (string, error) {
	cands := []string{path + ".tbi", path + ".csi"}
	if strings.HasSuffix(strings.ToLower(path), ".bcf") {
		cands[0], cands[1] = cands[1], cands[0]
	}
	data, err := os.Stat(path)
	if err != nil {
		return "", err
	}
	for _, c := range cands {
		st, err := os.Stat(c)
		if err != nil {
			continue
		}
		// Whole seconds, as file copies within one second may land in
		// either order.
		if st.ModTime().Unix() < data.ModTime().Unix() {
			return "", fmt.Errorf("%s: %w (index modified %s, data %s); rebuild the index, or if the data file was only copied, touch the index",
				c, ErrStaleIndex, st.ModTime().UTC().Format("2006-01-02 15:04:05"), data.ModTime().UTC().Format("2006-01-02 15:04:05"))
		}
		return c, nil
	}
	return "", fmt.Errorf("%s: %w: looked for %s and %s; region queries need a tabix (.tbi) or CSI (.csi) index",
		path, ErrNoIndex, cands[0], cands[1])
}

// regionChunks returns the BGZF chunks, sorted and merged, that hold every
// record of data file path overlapping any of regs, using the tabix or CSI
// index next to it (hts-specs: tabix; CSIv1 "Coordinate Sorted Index"). The
// chunks may also hold records outside the regions: callers filter each
// record with a regionSet. A chromosome named in regs that neither the
// index nor h knows is an error (ErrUnknownContig); one the header declares
// but the index lacks (no records) gives no chunks.
func regionChunks(path string, h *Header, regs []Region) ([]bgzf.Chunk, error) {
	idx, err := OpenIndex(path, h)
	if err != nil {
		return nil, err
	}
	inHeader := map[string]bool{}
	for _, c := range h.Contigs {
		inHeader[c.Name] = true
	}
	unknown := func(chrom string, names []string) error {
		show := names
		if len(show) > 8 {
			show = show[:8]
		}
		more := ""
		if len(names) > len(show) {
			more = fmt.Sprintf(" and %d more", len(names)-len(show))
		}
		return fmt.Errorf("%s: %w: %q (index has %s%s)", idx.Path, ErrUnknownContig, chrom, strings.Join(show, ", "), more)
	}
	var chunks []bgzf.Chunk
	for _, r := range regs {
		rid, ok := idx.Ref(r.Chrom)
		if !ok {
			if inHeader[r.Chrom] {
				continue
			}
			return nil, unknown(r.Chrom, idx.Names())
		}
		beg, end, ok := clampRegion(r, idx.MaxPos)
		if !ok {
			continue
		}
		cs, err := idx.Chunks(rid, int64(beg), int64(end))
		if err != nil {
			return nil, err
		}
		for _, c := range cs {
			chunks = append(chunks, toBGZFChunk(c))
		}
	}
	chunks = mergeChunks(chunks)
	if st, err := os.Stat(path); err == nil {
		for _, c := range chunks {
			if c.Begin.File >= st.Size() {
				return nil, staleOffsets(idx.Path, path, c.Begin.File, st.Size())
			}
		}
	}
	return chunks, nil
}

// noPanic runs an index decoder and turns a panic on damaged input (the
// decoders trust counts read from the file) into an error.
func noPanic(f func() error) (err error) {
	defer func() {
		if p := recover(); p != nil {
			err = fmt.Errorf("damaged index: %v", p)
		}
	}()
	return f()
}

// clampRegion converts a 1-based inclusive region to the 0-based half-open
// interval the index wants, clipped to the index's coordinate limit.
func clampRegion(r Region, maxPos int64) (beg, end int, ok bool) {
	b := r.Start - 1
	if b < 0 {
		b = 0
	}
	e := r.End
	if e <= 0 || e > maxPos {
		e = maxPos
	}
	if b >= e {
		return 0, 0, false
	}
	return int(b), int(e), true
}

// csiNames returns the sequence names stored in a CSI auxiliary field laid
// out like a tabix header (format, col_seq, col_beg, col_end, meta, skip,
// l_nm, names), or nil when there are none (as for BCF).
func csiNames(aux []byte) []string {
	if len(aux) < 28 {
		return nil
	}
	lnm := int(binary.LittleEndian.Uint32(aux[24:28]))
	if lnm <= 0 || 28+lnm > len(aux) {
		return nil
	}
	blob := bytes.TrimRight(aux[28:28+lnm], "\x00")
	var names []string
	for _, b := range bytes.Split(blob, []byte{0}) {
		names = append(names, string(b))
	}
	return names
}

// readIndexBytes reads a BGZF-compressed (or plain) index file whole.
func readIndexBytes(path string) ([]byte, error) {
	f, err := OpenText(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	// Indexes are small; cap at 1 GiB against a hostile file.
	return io.ReadAll(io.LimitReader(f, 1<<30))
}

func offLess(a, b bgzf.Offset) bool {
	if a.File != b.File {
		return a.File < b.File
	}
	return a.Block < b.Block
}

// mergeChunks sorts chunks by start and merges overlapping or touching ones
// so that each record is read once even when regions overlap.
func mergeChunks(cs []bgzf.Chunk) []bgzf.Chunk {
	if len(cs) == 0 {
		return nil
	}
	sort.Slice(cs, func(i, j int) bool { return offLess(cs[i].Begin, cs[j].Begin) })
	out := cs[:1]
	for _, c := range cs[1:] {
		last := &out[len(out)-1]
		if !offLess(last.End, c.Begin) { // c.Begin <= last.End
			if offLess(last.End, c.End) {
				last.End = c.End
			}
			continue
		}
		out = append(out, c)
	}
	return out
}
