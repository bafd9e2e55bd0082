package vcfscan

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"os"

	"github.com/biogo/hts/bgzf"
	"github.com/biogo/hts/bgzf/index"
	"github.com/biogo/hts/csi"
	"github.com/biogo/hts/tabix"
)

// Offset is a BGZF virtual offset (SAM/BAM format specification, section
// 4.1.1, hts-specs): File is the offset in the compressed file of the
// block holding the byte, Block the offset of the byte within that
// block's uncompressed data.
type Offset struct {
	File  int64
	Block uint16
}

// Virtual returns the offset packed as one number, File<<16 | Block, as
// index files store it.
func (o Offset) Virtual() uint64 { return uint64(o.File)<<16 | uint64(o.Block) }

// Less reports whether o comes before p in the file.
func (o Offset) Less(p Offset) bool {
	if o.File != p.File {
		return o.File < p.File
	}
	return o.Block < p.Block
}

// Chunk is the half-open stretch [Begin, End) of a BGZF file between two
// virtual offsets, the unit tabix and CSI indexes list (hts-specs tabix,
// CSIv1).
type Chunk struct {
	Begin, End Offset
}

// IndexRef is one reference sequence of an index, in index order.
type IndexRef struct {
	Name string
	// Span runs from the first record of the reference to the end of its
	// last one, from the index's per-reference statistics (the pseudo-bin
	// 37450 of tabix, or its CSI equivalent); valid when HasStats.
	Span Chunk
	// Records is the number of records the statistics count (mapped plus
	// unmapped); valid when HasStats.
	Records  int64
	HasStats bool
}

// Index is a tabix (.tbi) or CSI (.csi) index, read whole and checked:
// every count in it fits the file (so a damaged index cannot make the
// decoder allocate gigabytes), it is not older than its data file, and
// the reference statistics point inside the data file.
type Index struct {
	Path   string     // the index file
	Data   string     // the data file it indexes
	Refs   []IndexRef // in index order
	MaxPos int64      // largest coordinate the index covers (0-based, exclusive)

	tbx *tabix.Index
	csi *csi.Index
	ids map[string]int
}

// OpenIndex reads and checks the index next to data file path: path+".tbi"
// or path+".csi" (for BCF the CSI is tried first). h names the references
// of an index that does not store names (a CSI of a BCF file): the
// header's contig dictionary (its IDX numbers when given), else h.Contigs
// in order; h may be nil for a tabix index. Errors name the index file and
// wrap ErrNoIndex (neither exists), ErrStaleIndex (the index was last
// modified in an earlier second than the data file) or ErrMalformed
// (wrong magic, cut short, counts larger than the file, offsets past the
// end of the data file).
func OpenIndex(path string, h *Header) (*Index, error) {
	idxPath, err := findIndex(path)
	if err != nil {
		return nil, err
	}
	raw, err := readIndexBytes(idxPath)
	if err != nil {
		return nil, err
	}
	x := &Index{Path: idxPath, Data: path}
	if bytes.HasPrefix(raw, []byte("TBI\x01")) || bytes.HasPrefix(raw, []byte("CSI")) {
		if err := checkIndexCounts(raw); err != nil {
			return nil, fmt.Errorf("%s: %w", idxPath, err)
		}
	}
	var names []string
	switch {
	case bytes.HasPrefix(raw, []byte("TBI\x01")):
		var idx *tabix.Index
		err := noPanic(func() (err error) { idx, err = tabix.ReadFrom(bytes.NewReader(raw)); return err })
		if err != nil || idx == nil {
			return nil, fmt.Errorf("%s: %w: cannot read tabix index: %v", idxPath, ErrMalformed, err)
		}
		x.tbx, x.MaxPos = idx, tabixMaxPos
		names = idx.Names()
		for i := range names {
			st, ok := idx.ReferenceStats(i)
			x.Refs = append(x.Refs, refFromStats(names[i], st, ok))
		}
	case bytes.HasPrefix(raw, []byte("CSI\x01")) || bytes.HasPrefix(raw, []byte("CSI\x02")):
		if len(raw) < 12 {
			return nil, fmt.Errorf("%s: %w: CSI index cut short", idxPath, ErrMalformed)
		}
		minShift := binary.LittleEndian.Uint32(raw[4:8])
		depth := binary.LittleEndian.Uint32(raw[8:12])
		if minShift+3*depth > 62 {
			return nil, fmt.Errorf("%s: %w: CSI min_shift %d depth %d out of range", idxPath, ErrMalformed, minShift, depth)
		}
		var idx *csi.Index
		err := noPanic(func() (err error) { idx, err = csi.ReadFrom(bytes.NewReader(raw)); return err })
		if err != nil || idx == nil {
			return nil, fmt.Errorf("%s: %w: cannot read CSI index: %v", idxPath, ErrMalformed, err)
		}
		x.csi, x.MaxPos = idx, int64(1)<<(minShift+3*depth)
		names = csiNames(idx.Auxilliary)
		if names == nil && h != nil {
			// BCF: reference IDs are the header's contig dictionary.
			if _, names, err = bcfDictionaries(h.Meta); err != nil {
				return nil, fmt.Errorf("%s: %w: %v", path, ErrMalformed, err)
			}
			if len(names) == 0 {
				for _, c := range h.Contigs {
					names = append(names, c.Name)
				}
			}
		}
		for i := 0; i < idx.NumRefs() && i < len(names); i++ {
			st, ok := idx.ReferenceStats(i)
			x.Refs = append(x.Refs, refFromStats(names[i], st, ok))
		}
	default:
		return nil, fmt.Errorf("%s: %w: not a tabix or CSI index", idxPath, ErrMalformed)
	}
	x.ids = make(map[string]int, len(x.Refs))
	for i, r := range x.Refs {
		if _, dup := x.ids[r.Name]; !dup && r.Name != "" {
			x.ids[r.Name] = i
		}
	}
	if st, err := os.Stat(path); err == nil {
		for _, r := range x.Refs {
			if r.HasStats && r.Span.Begin.File >= st.Size() {
				return nil, staleOffsets(idxPath, path, r.Span.Begin.File, st.Size())
			}
		}
	}
	return x, nil
}

func staleOffsets(idxPath, path string, at, size int64) error {
	return fmt.Errorf("%s: %w: it points at byte %d but %s has only %d bytes; the index belongs to another version of the data file: rebuild it",
		idxPath, ErrMalformed, at, path, size)
}

func refFromStats(name string, st index.ReferenceStats, ok bool) IndexRef {
	r := IndexRef{Name: name, HasStats: ok}
	if ok {
		r.Span = fromBGZFChunk(st.Chunk)
		r.Records = int64(st.Mapped + st.Unmapped)
	}
	return r
}

// Ref returns the position in Refs of the reference named name, if the
// index knows it.
func (x *Index) Ref(name string) (int, bool) {
	i, ok := x.ids[name]
	return i, ok
}

// Names returns the reference names in index order.
func (x *Index) Names() []string {
	out := make([]string, len(x.Refs))
	for i, r := range x.Refs {
		out[i] = r.Name
	}
	return out
}

// Chunks returns the chunks that hold every record of reference ref
// (a position in Refs) overlapping the 0-based half-open interval
// [beg, end), clipped to [0, MaxPos); they may hold other records too.
// They come as the index lists them: neither sorted nor merged. An error
// means the index could not answer (a reference without bins is no error:
// no chunks).
func (x *Index) Chunks(ref int, beg, end int64) ([]Chunk, error) {
	if ref < 0 || ref >= len(x.Refs) {
		return nil, fmt.Errorf("%s: %w: no reference %d", x.Path, ErrUnknownContig, ref)
	}
	beg, end = max(beg, 0), min(end, x.MaxPos)
	if beg >= end {
		return nil, nil
	}
	var cs []bgzf.Chunk
	if x.tbx != nil {
		var err error
		cs, err = x.tbx.Chunks(x.Refs[ref].Name, int(beg), int(end))
		if err != nil && !errors.Is(err, index.ErrInvalid) {
			return nil, fmt.Errorf("%s: region %s: %w", x.Path, x.Refs[ref].Name, err)
		}
	} else {
		cs = x.csi.Chunks(ref, int(beg), int(end))
	}
	out := make([]Chunk, len(cs))
	for i, c := range cs {
		out[i] = fromBGZFChunk(c)
	}
	return out, nil
}

func fromBGZFChunk(c bgzf.Chunk) Chunk {
	return Chunk{Offset{c.Begin.File, c.Begin.Block}, Offset{c.End.File, c.End.Block}}
}

func toBGZFChunk(c Chunk) bgzf.Chunk {
	return bgzf.Chunk{Begin: bgzf.Offset{File: c.Begin.File, Block: c.Begin.Block}, End: bgzf.Offset{File: c.End.File, Block: c.End.Block}}
}
