package roh

import "fgauge/vcfscan"

// appendSite adds one site to a whole-chromosome chromData, packing the
// calls as the Collector's windows do (tests of the age model build
// their input this way).
func (ch *chromData) appendSite(pos int64, f float64, calls []vcfscan.Geno, pl []uint16) {
	t := len(ch.pos)
	ch.pos = append(ch.pos, pos)
	ch.freq = append(ch.freq, f)
	sh := uint(t&31) * 2
	if sh == 0 {
		for s := range ch.geno {
			ch.geno[s] = append(ch.geno[s], 0)
		}
	}
	w := t >> 5
	for s, g := range calls {
		if g > 3 {
			g = 3
		}
		ch.geno[s][w] |= uint64(g) << sh
	}
	if pl == nil {
		ch.plSite = append(ch.plSite, -1)
		return
	}
	if ch.pl == nil {
		ch.pl = make([][]uint8, len(ch.geno))
	}
	for s := range ch.geno {
		ch.pl[s] = append(ch.pl[s], cap255(pl[3*s]), cap255(pl[3*s+1]), cap255(pl[3*s+2]))
	}
	ch.plSite = append(ch.plSite, ch.nPL)
	ch.nPL++
}
