#!/bin/bash
# The long, on-demand variants of the reliability tests (CI runs the short ones):
# kill -9 at 200 random moments of a 2,000-candidate `check --out --resume` run, then every
# other reliability test once more. Needs root for the tmpfs mounts, as in CI. About 15 to 30 minutes.
set -euo pipefail
cd "$(dirname "$0")/.."
dotnet build CellCompiler.sln -c Release
CELLC_RELIABILITY_CANDIDATES=${CELLC_RELIABILITY_CANDIDATES:-2000} CELLC_RELIABILITY_KILLS=${CELLC_RELIABILITY_KILLS:-200} \
  dotnet test CellCompiler.sln -c Release --no-build --filter "FullyQualifiedName~ReliabilityTests"
