#!/usr/bin/env bash
# The long, on-demand robustness run of `cellc inspect` on hostile ONNX files (issue 10):
#   scripts/inspect-fuzz.sh [CASES] [SEED]      (defaults: 2000 cases, seed 1)
# 1. CASES mutated models (the generator of tests/CellCompiler.Tests/InspectMutations.cs: byte flips,
#    truncations, wrong and huge lengths, extreme varints, wrong wire types, deep nesting, and edits of
#    the parsed model), each inspected in-process and then through the real cellc process with its
#    managed heap capped at 1 GiB (DOTNET_GCHeapHardLimit) and a 60 s hang guard; every one must exit
#    0 or 2 (as the library decided) with a message naming the file, never crash, hang or run out of memory.
# 2. Endless inputs through the CLI at the real 2 GiB limit: a pipe of valid-looking protobuf
#    (`yes ' '`, field 4 as a varint forever) and /dev/zero, with peak memory (GNU time, Debian `time`).
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
  /usr/bin/time -f "%M %e" -o "$log.time" dotnet "$cellc" inspect "$@" 2>"$log" >/dev/null
  local code=$?
  set -e
  read -r rss seconds < <(tail -n 1 "$log.time")
  echo "$label: exit $code, peak RSS $((rss / 1024)) MiB, ${seconds}s: $(head -c 160 "$log")"
  rm -f "$log" "$log.time"
  [ "$code" -eq 2 ]
}
echo "== endless inputs at the 2 GiB limit"
endless "pipe of ' \\n' (yes ' ')" <(yes ' ')
endless "/dev/zero" /dev/zero
