#!/usr/bin/env python3
"""A search loop that drives cellc: screen a population against a budget, keep the largest working
candidates, mutate them into the next generation, and export the last survivors as PyTorch modules.

    python3 search_loop.py POPULATION.jsonl [--generations G] [--keep K] [--skeleton PRESET]
                           [--max-params N] [--jobs N] [--records FILE] [--export DIR]
                           [--cellc "COMMAND"] [--seed S]

POPULATION.jsonl holds one genotype per line, each with an "id" (`cellc sample` writes such
files). Each generation is streamed into `cellc check - --json`, and each record is read as soon
as cellc prints it. "Largest" (most params among the candidates whose status is ok, that is,
working and within --max-params) stands in for the accuracy you would get by training the
survivors elsewhere; `--export DIR` writes the last survivors as genotype files and as
`cellc export-torch` modules for that training.

--cellc is the command that runs cellc (default: cellc on PATH; e.g. "dotnet path/to/cellc.dll").
Every record goes to --records FILE (JSON Lines) when given. Standard library only.
"""

import argparse
import json
import os
import random
import shlex
import subprocess
import sys
import threading


def screen(genotypes, cellc, options=()):
    """Streams GENOTYPES (dicts, each with an "id") into `cellc check - --json` and yields each
    record as soon as cellc prints it.

    A writer thread feeds cellc's stdin while this generator reads its stdout. Writing the whole
    population first and reading afterwards deadlocks once the population is larger than the
    pipes hold: cellc screens while it reads, its records fill the stdout pipe, it waits for us
    to read them, stops reading its input, and our write waits for it in turn. cellc's progress
    lines go to our stderr, so that pipe cannot fill up either.
    """
    process = subprocess.Popen(
        [*cellc, "check", "-", "--json", *options],
        stdin=subprocess.PIPE, stdout=subprocess.PIPE, stderr=None,
        text=True, encoding="utf-8", bufsize=1)
    failures = []

    def feed():
        try:
            for genotype in genotypes:
                process.stdin.write(json.dumps(genotype, ensure_ascii=False, separators=(",", ":")) + "\n")
        except BrokenPipeError:
            pass  # cellc stopped reading (it exited); its exit code below says why
        except Exception as e:  # noqa: BLE001 - reported after cellc has finished
            failures.append(e)
        finally:
            try:
                process.stdin.close()
            except BrokenPipeError:
                pass

    writer = threading.Thread(target=feed, name="cellc-stdin", daemon=True)
    writer.start()
    try:
        for line in process.stdout:
            if line.strip():
                yield json.loads(line)
    finally:
        writer.join()
        code = process.wait()
    if failures:
        raise failures[0]
    # cellc check: 0 every candidate is ok, 1 some is not; anything else is a problem of the run itself.
    if code not in (0, 1):
        raise RuntimeError("cellc check exited with code %d" % code)


def screen_all(population, cellc, options, records_file=None):
    """Screens POPULATION and returns {id: record}, checking that every id came back exactly once."""
    expected = [g["id"] for g in population]
    asked = set(expected)
    if len(asked) != len(expected):
        raise ValueError("the population repeats an id")
    records = {}
    for record in screen(population, cellc, options):
        identifier = record["id"]
        if identifier in records or identifier not in asked:
            raise RuntimeError("cellc answered for %r twice or unasked" % identifier)
        records[identifier] = record
        if records_file is not None:
            records_file.write(json.dumps(record, ensure_ascii=False) + "\n")
        print("%-24s %-12s params %s" % (identifier, record["status"], record.get("params")), flush=True)
    missing = [i for i in expected if i not in records]
    if missing:
        raise RuntimeError("no record for %d candidate(s), e.g. %s" % (len(missing), missing[0]))
    return records


def level_zero_ops(genotype):
    """The ops the genotype's level 0 may use: the ones it uses, its declarations and identity."""
    ops = {"identity"}
    ops.update(genotype.get("primitives", {}))
    for motif in genotype["levels"][0]["motifs"].values():
        ops.update(edge[2] for edge in motif["edges"])
    return sorted(ops)


def mutate(parent, child_id, rng):
    """A copy of PARENT, with PARENT's id in its meta, whose one random level-0 edge applies another op."""
    child = json.loads(json.dumps(parent))
    child["id"] = child_id
    child.pop("name", None)
    child["meta"] = {"parent": parent["id"]}
    ops = level_zero_ops(parent)
    motifs = child["levels"][0]["motifs"]
    edges = motifs[rng.choice(sorted(motifs))]["edges"]
    edge = rng.choice(edges)
    choices = [op for op in ops if op != edge[2]]
    if choices:
        edge[2] = rng.choice(choices)
    return child


def next_generation(parents, size, generation, rng):
    return [mutate(rng.choice(parents), "g%d-%d" % (generation, n), rng) for n in range(size)]


def export(survivors, directory, cellc, skeleton):
    """Each survivor as a genotype file and a PyTorch module (`cellc export-torch`)."""
    os.makedirs(directory, exist_ok=True)
    for genotype in survivors:
        stem = os.path.join(directory, genotype["id"].replace("-", "_"))
        with open(stem + ".json", "w", encoding="utf-8") as f:
            json.dump(genotype, f, ensure_ascii=False)
        subprocess.run([*cellc, "export-torch", stem + ".json", "--skeleton", skeleton, "-o", stem + ".py"],
                       check=True, stdout=subprocess.DEVNULL)
        print("exported %s to %s.py" % (genotype["id"], stem), flush=True)


def main(argv):
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("population", help="JSON Lines, one genotype with an id per line")
    parser.add_argument("--generations", type=int, default=2)
    parser.add_argument("--keep", type=int, default=4, help="survivors per generation")
    parser.add_argument("--skeleton", default="proxy")
    parser.add_argument("--max-params", default="1M", help="the params budget for cellc check (default 1M)")
    parser.add_argument("--jobs", type=int, help="cellc check's workers")
    parser.add_argument("--records", help="write every record here (JSON Lines)")
    parser.add_argument("--export", help="write the last survivors' genotypes and PyTorch modules here")
    parser.add_argument("--cellc", default="cellc", help='the command that runs cellc, e.g. "dotnet cellc.dll"')
    parser.add_argument("--seed", type=int, default=0)
    args = parser.parse_args(argv[1:])

    cellc = shlex.split(args.cellc)
    options = ["--skeleton", args.skeleton, "--max-params", args.max_params]
    if args.jobs:
        options += ["--jobs", str(args.jobs)]
    rng = random.Random(args.seed)
    with open(args.population, encoding="utf-8") as f:
        population = [json.loads(line) for line in f if line.strip()]

    records_file = open(args.records, "w", encoding="utf-8") if args.records else None
    try:
        survivors = []
        for generation in range(args.generations):
            records = screen_all(population, cellc, options, records_file)
            working = [g for g in population if records[g["id"]]["status"] == "ok"]
            working.sort(key=lambda g: (-records[g["id"]]["params"], g["id"]))
            survivors = working[:args.keep] or survivors
            print(json.dumps({"generation": generation, "screened": len(records), "ok": len(working),
                              "survivors": [g["id"] for g in survivors]}), flush=True)
            if not survivors:
                raise RuntimeError("no candidate works; nothing to mutate")
            if generation + 1 < args.generations:
                population = next_generation(survivors, len(population), generation + 1, rng)
    finally:
        if records_file is not None:
            records_file.close()
    if args.export:
        export(survivors, args.export, cellc, args.skeleton)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
