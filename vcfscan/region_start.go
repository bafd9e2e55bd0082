package vcfscan

// regionEnd is the last position a record at pos with allele ref is
// tested against the regions with: the end of its REF span (tabix
// semantics: a deletion starting before a region but reaching into it
// belongs to it), or pos itself with Options.RegionsByStart, so that a
// record spanning the boundary of two adjacent regions belongs only to the
// one holding its POS.
func regionEnd(pos int64, ref []byte, byStart bool) int64 {
	if byStart {
		return pos
	}
	return pos + int64(len(ref)) - 1
}
