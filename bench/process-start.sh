#!/usr/bin/env bash
# Whole-process cost of a `cellc` call, as a search loop pays it (issue 10: `cellc --version`
# under 80 ms, `cellc compile` of a proxy candidate under 150 ms). Measured with hyperfine
# (Debian package `hyperfine`), each command started directly, without a shell:
#   - the Native AOT program (scripts/publish-native.sh; the same program `dotnet pack` puts in
#     the tool package and `dotnet tool install` runs),
#   - a ReadyToRun publish (the tool package before Native AOT), for comparison,
#   - the ordinary JIT build (bin/Release), for comparison,
#   - `dotnet run`, as the README's set-up commands call it (a few runs only: about 3 s each).
# Prints one table: wall time mean and min, and CPU time (user + system, mean), which varies less
# than wall time on a shared machine. The load average before and after is printed too.
# Usage: bench/process-start.sh [RUNS]   (default 40 runs per command; close other work first)
set -euo pipefail
cd "$(dirname "$0")/.."
runs=${1:-40}
command -v hyperfine >/dev/null || { echo "hyperfine not found: apt-get install hyperfine" >&2; exit 3; }
command -v jq >/dev/null || { echo "jq not found: apt-get install jq" >&2; exit 3; }

work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
genotype=fixtures/tidepool-h3.json

echo "Building: the JIT build, the Native AOT program and a ReadyToRun publish (a few minutes)..." >&2
dotnet build src/CellCompiler.Cli -c Release -nologo -v quiet >/dev/null
scripts/publish-native.sh "$work/native" >/dev/null
dotnet publish src/CellCompiler.Cli -c Release -r linux-x64 -nologo -v quiet -p:PublishAot=false -p:PublishReadyToRun=true \
  --artifacts-path "$work/r2r-build" -o "$work/r2r" >/dev/null
native=$work/native/cellc
r2r=$work/r2r/cellc
jit=src/CellCompiler.Cli/bin/Release/net10.0/cellc

echo "cellc $("$native" --version); $(nproc) cores; load average before: $(cut -d' ' -f1-3 /proc/loadavg)" >&2
hyperfine -N --warmup 5 --runs "$runs" --export-json "$work/start.json" \
  -n "native: cellc --version" "$native --version" \
  -n "native: cellc compile (proxy, h3)" "$native compile $genotype -o $work/h3.onnx" \
  -n "ReadyToRun: cellc --version" "$r2r --version" \
  -n "ReadyToRun: cellc compile (proxy, h3)" "$r2r compile $genotype -o $work/h3.onnx" \
  -n "JIT build: cellc --version" "$jit --version" \
  -n "JIT build: cellc compile (proxy, h3)" "$jit compile $genotype -o $work/h3.onnx" >&2
hyperfine -N --warmup 1 --runs 3 --export-json "$work/run.json" \
  -n "dotnet run -- --version" "dotnet run --project src/CellCompiler.Cli -- --version" >&2
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg)" >&2

echo "| command | runs | wall, mean | wall, min | CPU, user + system (mean) |"
echo "|---|---|---|---|---|"
jq -s -r '[.[].results[]][] |
  "| \(.command) | \(.times | length) | \(.mean * 1000 | round) ms | \(.min * 1000 | round) ms | \((.user + .system) * 1000 | round) ms |"' \
  "$work/start.json" "$work/run.json"
echo
echo "Folder sizes: native $(du -sh "$work/native" | cut -f1) (cellc $(du -h "$native" | cut -f1)), ReadyToRun $(du -sh "$work/r2r" | cut -f1)"
