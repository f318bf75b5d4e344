package main

import (
	"fmt"

	"github.com/spf13/pflag"
	"github.com/wakekit/wakekit/internal/pipeline"
)

func init() {
	register(&command{
		name:    "merge",
		summary: "joins the output folders of a run split with --shard into one result",
		usage:   "wakekit merge DIR... --out DIR",
		help: `Each DIR is the output folder of one share of a run made with --shard K/N (for example
one task of a cluster job array). merge checks that the folders come from the same command,
version, settings and input series, that each share is complete and that together they
cover every frame exactly once; then it copies each frame's files (checking them against the
sizes and SHA-256 digests the shards recorded), joins the manifests, rebuilds the time-series
tables in frame order and writes the run's summary. The result is identical, byte for byte,
to the same run on one machine.

A share that was interrupted is reported with its first missing frame; finish it with the
same command and --resume, then merge again. The shard folders are not changed.

Examples:
  wakekit merge tank2-shard-1 tank2-shard-2 tank2-shard-3 tank2-shard-4 --out tank2-derive
  wakekit merge runs/wakekit-derive-shard-*-of-8 --out runs/derive`,
		setup: func(fs *pflag.FlagSet) func(e *env, args []string) error {
			out := fs.StringP("out", "o", "", "folder for the merged result (required; not one of the shard folders)")
			quiet := fs.BoolP("quiet", "q", false, "print nothing on success")
			return func(e *env, args []string) error {
				if len(args) == 0 {
					return usagef("no shard folders given")
				}
				if *out == "" {
					return usagef("--out is required: the folder for the merged result")
				}
				rep, err := pipeline.Merge(*out, args)
				if err != nil {
					return err
				}
				if !*quiet {
					fmt.Fprintf(e.stdout, "merged %d folders of %q: %d frames, %d frame files, into %s\n",
						rep.Shards, rep.Command, rep.Frames, rep.Files, *out)
				}
				return nil
			}
		},
	})
}
