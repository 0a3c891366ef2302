#!/usr/bin/env bash
# Whole-process `cellc space` (issue 13): wall time and peak memory (max RSS) of exact enumeration of
# a 15,625-genotype space (target under 5 s on 2 cores) and of a 1,000,000-genotype space (target
# under 2 minutes), to show that enumeration streams: memory grows with the distinct networks kept
# (16-byte keys), not with the genotypes. Needs GNU time (Debian package `time`).
set -euo pipefail
cd "$(dirname "$0")/.."
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
dotnet build -c Release src/CellCompiler.Cli -o "$work/bin" -v quiet -nologo >/dev/null

cat > "$work/five.json" <<'JSON'
{"format":"space/1","name":"tidepool-five",
 "levels":[{"nodes":4,"ops":["none","identity","conv1x1","conv3x3","avgpool3x3"]}]}
JSON
cat > "$work/million.json" <<'JSON'
{"format":"space/1","name":"tidepool-million",
 "primitives":{"wide5":{"kind":"sepconv","kernel":5},"flat3":{"kind":"factorized","kernel":3}},
 "levels":[{"nodes":4,"ops":["none","identity","conv1x1","conv3x3","dwconv3x3","sepconv3x3","maxpool3x3","avgpool3x3","wide5","flat3"]}]}
JSON

measure() {
  local name=$1
  /usr/bin/time -f "%M %e" -o "$work/time-$name" \
    dotnet "$work/bin/cellc.dll" space "$work/$name.json" --samples 0 --json > "$work/$name.out"
  read -r rss seconds < <(tail -n 1 "$work/time-$name")
  python3 - "$work/$name.out" "$name" "$rss" "$seconds" <<'PY'
import json, sys
r = json.load(open(sys.argv[1]))
print("%s: %s genotypes, %s dead, %s distinct networks (%s); %s s wall, %.1f s enumerating, peak RSS %d MiB"
      % (sys.argv[2], r["genotypes"], r["dead"], r["distinct_networks"], r["method"], sys.argv[4], r["seconds"], int(sys.argv[3]) // 1024))
PY
}
measure five
measure million
