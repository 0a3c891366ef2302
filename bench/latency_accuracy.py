#!/usr/bin/python3
"""Accuracy of predicted against measured latency, from `cellc check --latency --latency-table` results.

Usage: latency_accuracy.py LABEL=RESULTS.jsonl [LABEL=RESULTS.jsonl ...]

Reads every record holding both `latency_ms` (measured p50 at batch 1) and `latency_predicted_ms`
and prints, per file and per group of files sharing the label's first word (the preset): the
count, the share within +-10% of the measured p50, the median absolute error, the median signed
error, and Spearman's rank correlation (Pearson's correlation of the ranks, ties averaged; the
usual definition). A second table does the same against the fastest timed run (`min_ms` of the
record's batch 1), which background load disturbs least: on a busy machine the p50 reads slower
than the machine is, the minimum much less so. When a second measurement of the same population
lies beside a results file (RESULTS.jsonl.again, `check --latency` run again), a third table sets
it against the first as if it were a prediction: how well the machine reproduces its own p50, the
ceiling of any predictor's agreement with one measurement. Plain Python: no library beyond the
standard one.
"""
import json
import os
import statistics
import sys


def ranks(values):
    order = sorted(range(len(values)), key=lambda i: values[i])
    result = [0.0] * len(values)
    i = 0
    while i < len(order):
        j = i
        while j + 1 < len(order) and values[order[j + 1]] == values[order[i]]:
            j += 1
        for k in range(i, j + 1):
            result[order[k]] = (i + j) / 2 + 1
        i = j + 1
    return result


def pearson(x, y):
    mx, my = statistics.fmean(x), statistics.fmean(y)
    sxy = sum((a - mx) * (b - my) for a, b in zip(x, y))
    sxx = sum((a - mx) ** 2 for a in x)
    syy = sum((b - my) ** 2 for b in y)
    return sxy / (sxx * syy) ** 0.5 if sxx > 0 and syy > 0 else float("nan")


def pairs(path, field="p50_ms"):
    out = []
    with open(path, encoding="utf-8") as f:
        for line in f:
            if not line.strip():
                continue
            r = json.loads(line)
            if r.get("latency_ms") and r.get("latency_predicted_ms") is not None:
                batch1 = next(b for b in r["latency"]["batches"] if b["batch"] == 1)
                out.append((batch1[field], r["latency_predicted_ms"]))
    return out


def remeasured(path, again):
    """(first p50, second p50) of every id measured in both files."""
    def p50s(p):
        out = {}
        with open(p, encoding="utf-8") as f:
            for line in f:
                if line.strip():
                    r = json.loads(line)
                    if r.get("latency_ms"):
                        out[r["id"]] = r["latency_ms"]
        return out
    first, second = p50s(path), p50s(again)
    return [(first[i], second[i]) for i in first if i in second]


def summary(label, data):
    if not data:
        return f"{label:<28} no records with both figures"
    errors = [(p - m) / m * 100 for m, p in data]
    within = sum(1 for e in errors if abs(e) <= 10) / len(errors) * 100
    mad = statistics.median(abs(e) for e in errors)
    signed = statistics.median(errors)
    rho = pearson(ranks([m for m, _ in data]), ranks([p for _, p in data]))
    measured = sorted(m for m, _ in data)
    return (f"{label:<28} {len(data):>5} {within:>9.1f}% {mad:>9.1f}% {signed:>+9.1f}% {rho:>9.3f}"
            f"   {measured[0]:.3f}-{measured[-1]:.3f} ms")


def main(argv):
    if len(argv) < 2:
        print(__doc__, file=sys.stderr)
        return 2
    for field, title in (("p50_ms", "measured p50"), ("min_ms", "fastest timed run")):
        print(f"Against the {title}:")
        print(f"{'population':<28} {'n':>5} {'within10':>10} {'med|err|':>10} {'med err':>10} {'spearman':>9}   measured range")
        groups = {}
        for arg in argv[1:]:
            label, path = arg.split("=", 1)
            data = pairs(path, field)
            groups.setdefault(label.split()[0], []).extend(data)
            print(summary(label, data))
        for preset, data in groups.items():
            print(summary(preset + " (all)", data))
        print()
    repeats = [arg.split("=", 1) for arg in argv[1:] if os.path.exists(arg.split("=", 1)[1] + ".again")]
    if repeats:
        print("The second measurement against the first (the machine's own reproducibility):")
        print(f"{'population':<28} {'n':>5} {'within10':>10} {'med|err|':>10} {'med err':>10} {'spearman':>9}   measured range")
        groups = {}
        for label, path in repeats:
            data = remeasured(path, path + ".again")
            groups.setdefault(label.split()[0], []).extend(data)
            print(summary(label, data))
        for preset, data in groups.items():
            print(summary(preset + " (all)", data))
        print()
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
