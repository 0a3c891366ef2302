#!/usr/bin/python3
"""Independent reference for the genotype hashes: which genotypes are the same network.

Usage:
    python3 network_classes.py CASES.jsonl
    python3 network_classes.py --self-test

CASES.jsonl holds one object per line: {"id": ..., "space": NAME (optional), "genotype": {genotype/1 object},
"hashes": {"hash": HEX, "network_hash:concat": HEX, "network_hash:sum": HEX}} (any subset of
the hash fields). Each genotype is lowered here, from its JSON and the contract's rules alone, to
a graph of layers: motifs inlined, primitives (built-in and declared, contract 3.1) decomposed
into their layers, identity edges and single-input nodes being the same tensor, merges as
Concat + the 1x1 projection or as one Sum (with nested sums flattened), dead code removed. Two
genotypes are the same network when their layer graphs are isomorphic as labelled DAGs whose
merge inputs are a multiset; NetworkX's VF2 matcher decides that (bucketed first by NetworkX's
Weisfeiler-Lehman graph hash, an invariant only used to avoid needless comparisons).

This file shares no code or design with the C# hasher: no canonical form is computed here.

Output: one JSON line per hash field: genotypes, dead, live, reference classes (distinct live
networks, plus one class for all dead cells if any), distinct hashes, split classes (one network
carrying several hashes) and shared hashes (one hash carried by several networks), with examples,
and per space: genotypes, dead, live and distinct networks.
Exit code: 0 when it ran (the verdict is in the output), 2 usage error, 3 NetworkX is missing.

--self-test checks the contract identities that the reference itself relies on for declared
primitives and prints one JSON line {"self_test": "ok"} or exits 1 naming the failed identity.
"""

import json
import sys
from collections import defaultdict

try:
    import networkx as nx
    from networkx.algorithms import isomorphism
except Exception as e:  # fail loudly: the calling test must not mistake this for a pass
    sys.stderr.write("network_classes.py: cannot import networkx (%s); install Debian's python3-networkx\n" % e)
    sys.exit(3)

# Contract 3.1: the built-ins are themselves declarations.
BUILTINS = {
    "conv1x1": {"kind": "conv", "kernel": 1},
    "conv3x3": {"kind": "conv", "kernel": 3},
    "dwconv3x3": {"kind": "dwconv", "kernel": 3},
    "sepconv3x3": {"kind": "sepconv", "kernel": 3},
    "maxpool3x3": {"kind": "maxpool", "kernel": 3},
    "avgpool3x3": {"kind": "avgpool", "kernel": 3},
}


class Layers:
    """The network being built: node 0 is the cell input; every node has a label and its inputs."""

    def __init__(self):
        self.label = ["input"]
        self.inputs = [[]]

    def layer(self, label, x):
        self.label.append(label)
        self.inputs.append([x])
        return len(self.label) - 1

    def join(self, label, xs):
        self.label.append(label)
        self.inputs.append(list(xs))
        return len(self.label) - 1


def channels(multiple):
    """Output channels as a multiple of the cell's channel count C."""
    return "C" if multiple == 1 else "%sC" % multiple


def conv(net, x, kh, kw, dilation, out, bias=False):
    # A 1x1 kernel reads one pixel whatever the dilation: the same layer.
    d = 1 if kh == 1 and kw == 1 else dilation
    return net.layer("conv %dx%d dilation %d out %s%s" % (kh, kw, d, out, " bias" if bias else ""), x)


def depthwise(net, x, k, dilation):
    return net.layer("depthwise conv %dx%d dilation %d" % (k, k, dilation), x)


def activation(net, x, act):
    if act == "relu":
        return net.layer("relu", x)
    if act == "relu6":
        return net.layer("clip 0 6", x)
    if act == "hardswish":
        return net.layer("hardswish", x)
    if act == "silu":
        gate = net.layer("sigmoid", x)
        return net.join("mul", [x, gate])
    if act == "none":
        return x
    raise ValueError("unknown activation %r" % act)


def primitive(net, decl, x):
    """Contract 3.1's lowering of one declared primitive, layer by layer."""
    kind = decl["kind"]
    k = decl.get("kernel")
    d = decl.get("dilation", 1)
    act = decl.get("act", "relu")
    if kind == "conv":
        return activation(net, net.layer("bn", conv(net, x, k, k, d, "C")), act)
    if kind == "dwconv":
        return activation(net, net.layer("bn", depthwise(net, x, k, d)), act)
    if kind == "sepconv":
        for _ in range(decl.get("repeat", 1)):
            x = activation(net, net.layer("bn", conv(net, depthwise(net, x, k, d), 1, 1, 1, "C")), act)
        return x
    if kind == "factorized":
        row = conv(net, x, 1, k, 1, "C")
        col = conv(net, row, k, 1, 1, "C")
        return activation(net, net.layer("bn", col), act)
    if kind == "maxpool":
        return net.layer("maxpool %dx%d" % (k, k), x)
    if kind == "avgpool":
        return net.layer("avgpool %dx%d excluding padding" % (k, k), x)
    if kind == "mbconv":
        expand = decl.get("expand", 6)
        se = decl.get("se", 0)
        h = x
        if expand > 1:
            h = activation(net, net.layer("bn", conv(net, h, 1, 1, 1, channels(expand))), act)
        h = activation(net, net.layer("bn", depthwise(net, h, k, 1)), act)
        if se > 0:
            squeeze = net.layer("global average pool", h)
            reduced = conv(net, squeeze, 1, 1, 1, "max(1, floor(C * %r))" % float(se), bias=True)
            reduced = activation(net, reduced, "relu" if act == "none" else act)
            gate = net.layer("sigmoid", conv(net, reduced, 1, 1, 1, channels(expand), bias=True))
            h = net.join("mul", [h, gate])
        return net.layer("bn", conv(net, h, 1, 1, 1, "C"))
    raise ValueError("unknown primitive kind %r" % kind)


def lower(genotype, merge):
    """The layer network of the cell under `merge` ('concat' or 'sum'), or None for a dead cell."""
    levels = genotype["levels"]
    decls = dict(BUILTINS)
    decls.update(genotype.get("primitives", {}))
    net = Layers()

    def merged(xs):
        if merge == "concat":
            return primitive(net, BUILTINS["conv1x1"], net.join("concat", xs))
        terms = []
        for x in xs:
            # Sum is associative and commutative: a term that is a Sum contributes its terms.
            terms.extend(net.inputs[x] if net.label[x] == "sum" else [x])
        return net.join("sum", terms)

    def apply(level, op, x):
        if op == "identity":
            return x
        if level == 0:
            return primitive(net, decls[op], x)
        return motif(level - 1, op, x)

    def motif(level, name, x):
        n = levels[level]["nodes"]
        edges = levels[level]["motifs"][name]["edges"]
        tensor = [None] * n
        tensor[0] = x
        for j in range(1, n):
            live = []
            for i, _, op in sorted((e for e in edges if e[1] == j), key=lambda e: e[0]):
                if op == "none" or tensor[i] is None:
                    continue
                y = apply(level, op, tensor[i])
                if y is not None:  # None: a dead motif acts as none
                    live.append(y)
            tensor[j] = None if not live else live[0] if len(live) == 1 else merged(live)
        return tensor[n - 1]

    top = len(levels) - 1
    cell = next(iter(levels[top]["motifs"]))
    out = motif(top, cell, 0)
    if out is None:
        return None
    return to_graph(net, out)


def to_graph(net, out):
    """Only what the output depends on, as a DiGraph whose edge attribute counts repeated inputs."""
    keep = {out}
    stack = [out]
    while stack:
        v = stack.pop()
        for u in net.inputs[v]:
            if u not in keep:
                keep.add(u)
                stack.append(u)
    g = nx.DiGraph()
    for v in keep:
        g.add_node(v, label=net.label[v] + (" (output)" if v == out else ""))
    for v in keep:
        counts = defaultdict(int)
        for u in net.inputs[v]:
            counts[u] += 1
        for u, c in counts.items():
            g.add_edge(u, v, count=str(c))
    return g


def same(a, b):
    return nx.is_isomorphic(a, b,
                            node_match=isomorphism.categorical_node_match("label", None),
                            edge_match=isomorphism.categorical_edge_match("count", None))


class Classes:
    """Assigns each graph the id of its isomorphism class."""

    def __init__(self):
        self.buckets = defaultdict(list)  # invariant -> [(graph, class id)]
        self.count = 0

    def of(self, g):
        key = (g.number_of_nodes(), g.number_of_edges(),
               tuple(sorted(d["label"] for _, d in g.nodes(data=True))),
               nx.weisfeiler_lehman_graph_hash(g, node_attr="label", edge_attr="count", iterations=4))
        for rep, cid in self.buckets[key]:
            if same(g, rep):
                return cid
        cid = self.count
        self.count += 1
        self.buckets[key].append((g, cid))
        return cid


def exact_key(g):
    """Identical constructions (same node numbers) need no isomorphism test."""
    return (tuple(sorted((v, d["label"]) for v, d in g.nodes(data=True))),
            tuple(sorted((u, v, d["count"]) for u, v, d in g.edges(data=True))))


def classify(cases, merge):
    classes = Classes()
    memo = {}
    result = []
    for case in cases:
        g = lower(case["genotype"], merge)
        if g is None:
            result.append("dead")
            continue
        key = exact_key(g)
        if key not in memo:
            memo[key] = classes.of(g)
        result.append(memo[key])
    return result


def verdict(field, merge, cases, classes):
    hashes = [c["hashes"][field] for c in cases]
    by_class = defaultdict(set)
    by_hash = defaultdict(set)
    for cid, h, c in zip(classes, hashes, cases):
        by_class[cid].add(h)
        by_hash[h].add(cid)
    ids = defaultdict(list)
    for cid, h, c in zip(classes, hashes, cases):
        ids[(cid, h)].append(c["id"])
    spaces = defaultdict(lambda: {"genotypes": 0, "dead": 0, "networks": set()})
    for cid, c in zip(classes, cases):
        space = spaces[c.get("space", "all")]
        space["genotypes"] += 1
        if cid == "dead":
            space["dead"] += 1
        else:
            space["networks"].add(cid)
    split = [cid for cid, hs in by_class.items() if len(hs) > 1]
    shared = [h for h, cs in by_hash.items() if len(cs) > 1]
    dead = sum(1 for cid in classes if cid == "dead")
    return {
        "field": field,
        "merge": merge,
        "genotypes": len(cases),
        "dead": dead,
        "live": len(cases) - dead,
        "networks": len([cid for cid in by_class if cid != "dead"]),
        "reference_classes": len(by_class),
        "hashes": len(by_hash),
        "split_classes": len(split),
        "shared_hashes": len(shared),
        "spaces": {name: {"genotypes": v["genotypes"], "dead": v["dead"], "live": v["genotypes"] - v["dead"],
                          "networks": len(v["networks"])} for name, v in sorted(spaces.items())},
        "split_examples": [[ids[(cid, h)][0] for h in sorted(by_class[cid])] for cid in split[:3]],
        "shared_examples": [[ids[(cid, h)][0] for cid in by_hash[h]] for h in shared[:3]],
    }


FIELDS = {"hash": "concat", "network_hash:concat": "concat", "network_hash:sum": "sum"}


def self_test():
    """The identities of contract 3.1 that make chains comparable across primitives."""
    def flat(ops, primitives=None):
        edges = [[i, i + 1, op] for i, op in enumerate(ops)]
        g = {"format": "genotype/1", "levels": [{"nodes": len(ops) + 1, "motifs": {"cell": {"edges": edges}}}]}
        if primitives:
            g["primitives"] = primitives
        return g

    checks = [
        ("sepconv repeat 2 is two sepconv rounds",
         flat(["twice"], {"twice": {"kind": "sepconv", "kernel": 3, "repeat": 2}}),
         flat(["sepconv3x3", "sepconv3x3"]), True),
        ("mbconv expand 1 se 0 is dwconv then conv k1 act none",
         flat(["mb"], {"mb": {"kind": "mbconv", "kernel": 3, "expand": 1}}),
         flat(["dwconv3x3", "lin"], {"lin": {"kind": "conv", "kernel": 1, "act": "none"}}), True),
        ("a built-in spelled as its declaration is the built-in",
         flat(["mine"], {"mine": {"kind": "conv", "kernel": 3, "dilation": 1, "act": "relu"}}),
         flat(["conv3x3"]), True),
        ("dilation changes a 3x3 sepconv",
         flat(["holey"], {"holey": {"kind": "sepconv", "kernel": 3, "dilation": 2}}),
         flat(["sepconv3x3"]), False),
        ("silu differs from relu",
         flat(["s"], {"s": {"kind": "conv", "kernel": 3, "act": "silu"}}),
         flat(["conv3x3"]), False),
        ("squeeze-excitation changes an mbconv",
         flat(["a"], {"a": {"kind": "mbconv", "kernel": 3, "se": 0.25}}),
         flat(["b"], {"b": {"kind": "mbconv", "kernel": 3}}), False),
    ]
    for name, a, b, expected in checks:
        for merge in ("concat", "sum"):
            if same(lower(a, merge), lower(b, merge)) != expected:
                sys.stderr.write("network_classes.py self-test failed: %s (%s)\n" % (name, merge))
                sys.exit(1)
    print(json.dumps({"self_test": "ok", "checks": len(checks)}))


def main(argv):
    if len(argv) == 2 and argv[1] == "--self-test":
        self_test()
        return 0
    if len(argv) != 2:
        sys.stderr.write(__doc__)
        return 2
    with open(argv[1], encoding="utf-8") as f:
        cases = [json.loads(line) for line in f if line.strip()]
    fields = sorted({name for c in cases for name in c["hashes"]})
    unknown = [name for name in fields if name not in FIELDS]
    if unknown:
        sys.stderr.write("network_classes.py: unknown hash fields %s\n" % unknown)
        return 2
    by_merge = {}
    for field in fields:
        merge = FIELDS[field]
        if merge not in by_merge:
            by_merge[merge] = classify(cases, merge)
        print(json.dumps(verdict(field, merge, cases, by_merge[merge])))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
