#!/usr/bin/env bash
# Accuracy of latency prediction on this machine (on demand; with 200 candidates per population
# about 15 minutes for proxy and 1 to 2 hours for full on 2 cores). For each preset and merge mode it calibrates one table (built-ins and
# the declared kinds below), samples two populations (built-ins only; declared kinds with a few
# built-ins) and screens them with both `--latency` (measured p50) and `--latency-table`
# (predicted), then prints, per population and per preset: the share within +-10% of the measured
# p50, the median absolute error and Spearman's rank correlation (bench/latency_accuracy.py).
#
#   bench/latency-accuracy.sh                      # proxy and full, 200 candidates per population
#   PRESETS=proxy COUNT=100 bench/latency-accuracy.sh
#   FULL_COUNT=50 bench/latency-accuracy.sh        # the first 50 of each population for full
#   KEEP=/tmp/acc bench/latency-accuracy.sh        # keep tables, populations and results there
#   REPEAT=0 bench/latency-accuracy.sh             # skip the second measurement of each population
#
# Each population is measured twice (REPEAT=1, the default): the second measurement against the
# first is the machine's own reproducibility, the ceiling of any prediction's agreement with one.
#
# Run it on a quiet machine: the load average is logged before and after every step (conditions.txt),
# and measurements taken under load mislead both the table and the measured side.
set -euo pipefail
cd "$(dirname "$0")/.."
root=$(pwd)
work=${KEEP:-$(mktemp -d)}
mkdir -p "$work"
[[ -n "${KEEP:-}" ]] || trap 'rm -rf "$work"' EXIT
count=${COUNT:-200}
full_count=${FULL_COUNT:-$count}
presets=${PRESETS:-proxy full}
seed=${SEED:-2026}

dotnet build -c Release src/CellCompiler.Cli -o "$work/bin" -v quiet -nologo >/dev/null
cellc() { dotnet "$work/bin/cellc.dll" "$@"; }
log() { echo "$(date -u +%H:%M:%S) $* | $(cut -d' ' -f1-3 /proc/loadavg)" | tee -a "$work/conditions.txt" >&2; }

# The declared kinds of fixtures/tidepool-vocab.json: every kind, dilations, a second round, silu, hardswish, relu6, none.
cat > "$work/primitives.json" <<'JSON'
{ "wide5": { "kind": "sepconv", "kernel": 5 },
  "holey3": { "kind": "sepconv", "kernel": 3, "dilation": 2 },
  "twice3": { "kind": "sepconv", "kernel": 3, "repeat": 2, "act": "relu6" },
  "bneck3": { "kind": "mbconv", "kernel": 3, "expand": 6, "se": 0.25, "act": "silu" },
  "lean5": { "kind": "mbconv", "kernel": 5, "expand": 1, "act": "none" },
  "strip7": { "kind": "factorized", "kernel": 7 },
  "pool5": { "kind": "maxpool", "kernel": 5 },
  "soft5": { "kind": "avgpool", "kernel": 5 },
  "hconv3": { "kind": "conv", "kernel": 3, "act": "hardswish" },
  "dw7": { "kind": "dwconv", "kernel": 7, "dilation": 3, "act": "silu" } }
JSON
declared_ops=identity,conv1x1,sepconv3x3,wide5,holey3,twice3,bneck3,lean5,strip7,pool5,soft5,hconv3,dw7

cellc sample --levels 4,5 --motifs 6,1 --count "$count" --seed "$seed" -o "$work/builtins.jsonl"
cellc sample --levels 4,5 --motifs 6,1 --count "$count" --seed "$((seed + 1))" \
  --primitives "$work/primitives.json" --ops "$declared_ops" -o "$work/declared.jsonl"

log "machine: $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | xargs), $(nproc) cores"
results=()
for preset in $presets; do
  # Long runs need fewer timed runs for a steady p50.
  timing=(--warmup 10 --runs 50)
  [[ $preset == proxy ]] || timing=(--warmup 5 --runs 30)
  for merge in concat sum; do
    table="$work/table.json"
    log "calibrate $preset $merge"
    cellc calibrate --skeleton "$preset" --merge "$merge" --primitives "$work/primitives.json" -o "$table" 2> "$work/calibrate-$preset-$merge.log" >/dev/null
    for vocabulary in builtins declared; do
      out="$work/$preset-$merge-$vocabulary.jsonl"
      n=$count; [[ $preset == proxy ]] || n=$full_count
      head -n "$n" "$work/$vocabulary.jsonl" > "$work/$vocabulary-$n.jsonl"
      log "check $preset $merge $vocabulary ($n candidates)"
      cellc check "$work/$vocabulary-$n.jsonl" --skeleton "$preset" --merge "$merge" --latency "${timing[@]}" \
        --latency-table "$table" --no-cache --jobs 1 --out "$out" >/dev/null 2>"$work/check-$preset-$merge-$vocabulary.log" || true
      rm -f "$out.again"
      if [[ ${REPEAT:-1} == 1 ]]; then
        log "check $preset $merge $vocabulary again ($n candidates, measured only)"
        cellc check "$work/$vocabulary-$n.jsonl" --skeleton "$preset" --merge "$merge" --latency "${timing[@]}" \
          --no-cache --jobs 1 --out "$out.again" >/dev/null 2>>"$work/check-$preset-$merge-$vocabulary.log" || true
      fi
      results+=("$preset $merge $vocabulary=$out")
    done
  done
done
log "done"
echo
/usr/bin/python3 "$root/bench/latency_accuracy.py" "${results[@]}"
echo
echo "Load averages (1, 5, 15 min) during the run:"
cat "$work/conditions.txt"
