#!/usr/bin/env bash
# Whole-process cost of a `cellc` call, as a search loop pays it (issue 10: `cellc --version`
# under 80 ms, `cellc compile` of a proxy candidate under 150 ms). Measured with hyperfine
# (Debian package `hyperfine`), each command started directly, without a shell:
#   - the published tool (ReadyToRun, linux-x64; the same files `dotnet pack` puts in the tool
#     package and `dotnet tool install` runs),
#   - the ordinary JIT build (bin/Release), for comparison,
#   - `dotnet run`, as the README's set-up commands call it (a few runs only: about 3 s each).
# Usage: bench/process-start.sh [RUNS]   (default 40 runs per command; close other work first)
set -euo pipefail
cd "$(dirname "$0")/.."
runs=${1:-40}
command -v hyperfine >/dev/null || { echo "hyperfine not found: apt-get install hyperfine" >&2; exit 3; }

work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
genotype=fixtures/tidepool-h3.json

echo "Building (Release JIT build, and the ReadyToRun publish into $work)..." >&2
dotnet build src/CellCompiler.Cli -c Release -nologo -v quiet >/dev/null
dotnet publish src/CellCompiler.Cli -c Release -r linux-x64 -nologo -v quiet \
  --artifacts-path "$work/artifacts" -o "$work/cellc" >/dev/null
published=$work/cellc/cellc
jit=src/CellCompiler.Cli/bin/Release/net10.0/cellc

echo "cellc $("$published" --version); $(nproc) cores; load average $(cut -d' ' -f1-3 /proc/loadavg)" >&2
hyperfine -N --warmup 5 --runs "$runs" --export-markdown "$work/start.md" \
  -n "published: cellc --version" "$published --version" \
  -n "published: cellc compile (proxy, h3)" "$published compile $genotype -o $work/h3.onnx" \
  -n "JIT build: cellc --version" "$jit --version" \
  -n "JIT build: cellc compile (proxy, h3)" "$jit compile $genotype -o $work/h3.onnx" >&2
hyperfine -N --warmup 1 --runs 3 --export-markdown "$work/run.md" \
  -n "dotnet run -- --version" "dotnet run --project src/CellCompiler.Cli -- --version" >&2
cat "$work/start.md" "$work/run.md"
