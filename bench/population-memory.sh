#!/usr/bin/env bash
# Peak memory (max RSS) of `cellc check` over populations of 1,000 and 100,000 candidates, to show
# that screening streams: the ratio must stay within 1.5. The population comes from `cellc sample`
# with 3-node cells, so it is mostly repeats: each run starts with an empty cache, compiles and
# runs every distinct network once (a few hundred ONNX Runtime sessions in both runs) and answers
# the repeats from the cache, which keeps the 100,000 run to seconds on 2 cores while still
# reading, hashing, judging and writing every candidate. Needs GNU time (Debian package `time`).
set -euo pipefail
cd "$(dirname "$0")/.."
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
dotnet build -c Release src/CellCompiler.Cli -o "$work/bin" -v quiet -nologo >/dev/null
cellc() { dotnet "$work/bin/cellc.dll" "$@"; }

cellc sample --levels 3 --count 100000 --seed 1 -o "$work/pop-100000.jsonl"
head -n 1000 "$work/pop-100000.jsonl" > "$work/pop-1000.jsonl"

measure() {
  local n=$1
  /usr/bin/time -f "%M %e" -o "$work/time-$n" \
    dotnet "$work/bin/cellc.dll" check "$work/pop-$n.jsonl" --cache "$work/cache-$n.db" --out "$work/out-$n.jsonl" >/dev/null || true
  read -r rss seconds < <(tail -n 1 "$work/time-$n")
  local lines; lines=$(wc -l < "$work/out-$n.jsonl")
  echo "$n candidates: $lines records, peak RSS $((rss / 1024)) MiB, ${seconds}s ($(awk -v n="$lines" -v s="$seconds" 'BEGIN{printf "%.0f", n/s*60}') per minute)"
  echo "$rss" > "$work/rss-$n"
}
measure 1000
measure 100000
awk -v a="$(cat "$work/rss-1000")" -v b="$(cat "$work/rss-100000")" 'BEGIN{printf "ratio 100,000 / 1,000: %.2f (target <= 1.5)\n", b/a}'
