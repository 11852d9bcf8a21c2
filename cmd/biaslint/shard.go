package main

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/urfave/cli/v2"
)

// shardFlag selects one part of a batch, for runs split over CI jobs.
var shardFlag = &cli.StringFlag{
	Name: "shard",
	Usage: "check only part `I/N` of the netlists (1 <= I <= N): the files are dealt round-robin, in input order, " +
		"to N parts; 'biaslint merge' joins the parts' JSON or SARIF reports into the unsharded report",
}

// maxShards bounds N of --shard.
const maxShards = 10000

// parseShard reads --shard I/N; zero values mean no sharding.
func parseShard(s string) (i, n int, err error) {
	if s == "" {
		return 0, 0, nil
	}
	a, b, ok := strings.Cut(s, "/")
	i, err1 := strconv.Atoi(strings.TrimSpace(a))
	n, err2 := strconv.Atoi(strings.TrimSpace(b))
	if !ok || err1 != nil || err2 != nil || n < 1 || n > maxShards || i < 1 || i > n {
		return 0, 0, badInput(fmt.Errorf("biaslint: --shard %q: write I/N with 1 <= I <= N <= %d, e.g. --shard 2/4", s, maxShards))
	}
	return i, n, nil
}

// A shard's inputs: input k (from 0, in input order) belongs to shard
// k mod n + 1 (checkRun.all). The split depends only on the input list, so
// every job of a CI matrix that names the same FILE arguments gets a
// disjoint part, and together they cover every file.

// withoutFlag returns flags without the one named name.
func withoutFlag(flags []cli.Flag, name string) []cli.Flag {
	var out []cli.Flag
	for _, f := range flags {
		if f.Names()[0] != name {
			out = append(out, f)
		}
	}
	return out
}
