#!/usr/bin/env bash
# On-demand fuzzing: the FuzzTests corpus with more cases and any seed.
#   scripts/fuzz.sh [CASES] [SEED]      (defaults: 200000 cases, a seed from the clock)
# CI runs the same test with its fixed corpus of 20,000 cases. A failure prints the case's input
# and its seed and index, so it can be replayed with the same two numbers.
set -euo pipefail
cd "$(dirname "$0")/.."
export CELLC_FUZZ_CASES="${1:-200000}"
export CELLC_FUZZ_SEED="${2:-$(date +%s)}"
echo "fuzzing $CELLC_FUZZ_CASES cases with seed $CELLC_FUZZ_SEED"
dotnet build CellCompiler.sln -c Release -v quiet
dotnet test CellCompiler.sln -c Release --no-build --filter "FullyQualifiedName~FuzzTests.A_fixed_seed_corpus" \
  --logger "console;verbosity=detailed"
