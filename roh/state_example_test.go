package roh_test

import (
	"fmt"

	"fgauge/roh"
	"fgauge/vcfscan"
)

// Two shards each hold half of chromosome 1 of the made-up calf; their
// pieces, joined in position order, give the run one pass finds
// (ExampleNewCollector).
func ExampleJoinAndDetect() {
	cfg := roh.DefaultConfig()
	contigs := []vcfscan.Contig{{Name: "1", Length: 10_000_000}}
	b, freqs := calfBatch()
	half := len(b.Records) / 2
	var pieces []roh.Piece
	for k, part := range [][2]int{{0, half}, {half, len(b.Records)}} {
		shard := &vcfscan.Batch{Seq: int64(k), NSamples: 1, Records: b.Records[part[0]:part[1]], GT: b.GT[part[0]:part[1]]}
		pc, err := roh.NewPieceCollector(cfg, 1)
		if err != nil {
			panic(err)
		}
		if err := pc.AddBatch(shard, freqs[part[0]:part[1]]); err != nil {
			panic(err)
		}
		ps, _ := pc.Pieces(contigs)
		pieces = append(pieces, ps...)
	}
	res, err := roh.JoinAndDetect(cfg, []string{"calf_07"}, [][]roh.Piece{pieces})
	if err != nil {
		panic(err)
	}
	for _, run := range res.Chroms[0].Runs {
		fmt.Println(run.Start, run.End, run.NHet)
	}
	// Output:
	// 1950000 7000000 0
}
