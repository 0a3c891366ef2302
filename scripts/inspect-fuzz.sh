#!/usr/bin/env bash
# The long, on-demand robustness run of `cellc inspect` and `cellc bench` on hostile ONNX files (issue 10):
#   scripts/inspect-fuzz.sh [CASES] [SEED]      (defaults: 2000 cases, seed 1)
# 1. CASES mutated models (the generator of tests/CellCompiler.Tests/InspectMutations.cs: byte flips,
#    truncations, wrong and huge lengths, extreme varints, wrong wire types, deep nesting, and edits of
#    the parsed model), each inspected in-process and then through the real cellc process with its
#    managed heap capped at 1 GiB (DOTNET_GCHeapHardLimit) and a 60 s hang guard; every model inspect
#    accepts is also benched (batch 1, one timed run), in-process and through the process. Every one must
#    exit 0 or 2 (as the library decided) with a message naming the file, never crash, hang or run out of
#    memory; a native crash of ONNX Runtime shows as a death by a signal (exit 134, 139) and fails the run.
# 2. Endless inputs through the CLI at the real 2 GiB limit: a pipe of valid-looking protobuf
#    (`yes ' '`, field 4 as a varint forever) and /dev/zero, to inspect and to bench (under a name
#    ending in .onnx), with peak memory (GNU time, Debian `time`).
# The CI suite runs a 400-case slice of step 1 in-process (InspectFuzzTests).
set -euo pipefail
cd "$(dirname "$0")/.."
cases=${1:-2000}
seed=${2:-1}

dotnet build CellCompiler.sln -c Release -v quiet -nologo >/dev/null
echo "== $cases mutated models, seed $seed, in-process and through the cellc process"
CELLC_INSPECT_FUZZ_CASES=$cases CELLC_INSPECT_FUZZ_SEED=$seed CELLC_INSPECT_FUZZ_CLI=1 \
  dotnet test CellCompiler.sln -c Release --no-build \
    --filter "FullyQualifiedName~InspectFuzzTests.A_fixed_seed_corpus" --logger "console;verbosity=detailed" \
  | grep -v '^\s*$'

cellc=tests/CellCompiler.Tests/bin/Release/net10.0/cellc.dll
endless() {
  local label=$1; shift
  local log; log=$(mktemp)
  set +e
  /usr/bin/time -f "%M %e" -o "$log.time" dotnet "$cellc" "$@" 2>"$log" >/dev/null
  local code=$?
  set -e
  read -r rss seconds < <(tail -n 1 "$log.time")
  echo "$label: exit $code, peak RSS $((rss / 1024)) MiB, ${seconds}s: $(head -c 160 "$log")"
  rm -f "$log" "$log.time"
  [ "$code" -eq 2 ]
}
echo "== endless inputs at the 2 GiB limit"
links=$(mktemp -d)
trap 'rm -rf "$links"' EXIT
# bench reads a model only under a name ending in .onnx: links to the pipe (standard input) and the device.
ln -s /dev/stdin "$links/pipe.onnx"
ln -s /dev/zero "$links/zero.onnx"
endless "inspect: pipe of ' \\n' (yes ' ')" inspect <(yes ' ')
endless "inspect: /dev/zero" inspect /dev/zero
endless "bench: pipe of ' \\n' (yes ' ')" bench "$links/pipe.onnx" < <(yes ' ')
endless "bench: /dev/zero" bench "$links/zero.onnx"
