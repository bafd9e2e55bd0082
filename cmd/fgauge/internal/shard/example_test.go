package shard_test

import (
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"fgauge/cmd/fgauge/internal/shard"
)

// Scan two halves of a public fixture as shards and merge their states:
// the merge counts what one pass over the whole file counts.
func ExampleMerge() {
	dir, _ := os.MkdirTemp("", "shard")
	defer os.RemoveAll(dir)
	var states []string
	for i, region := range []string{"1:1-12000", "1:12001-"} {
		out := filepath.Join(dir, fmt.Sprintf("shard%d", i+1))
		if err := scanShard(cohort189, out, out+".state", []string{region}); err != nil {
			panic(err)
		}
		states = append(states, out+".state")
	}
	res, err := shard.Merge(context.Background(), shard.MergeConfig{
		States: states, Out: filepath.Join(dir, "merged"), Threads: 1, Version: "example", Stderr: io.Discard,
	})
	if err != nil {
		panic(err)
	}
	fmt.Println(res.States, "states:", res.Read, "records,", res.Kept, "sites kept,", res.Samples, "samples")
	// Output:
	// 2 states: 115 records, 99 sites kept, 189 samples
}
