#!/usr/bin/python3
"""Independent PyTorch reimplementation of the compiler's contract, used as the test oracle.

It reads genotype + resolved skeleton pairs and builds each network from torch.nn layers
(PyTorch, Debian's python3-torch, is the source of the layer semantics), following sections
1-4 of the contract: hierarchical motif expansion, merge rules, dead-code removal, stem,
reductions and head. It then reports the figures the compiler must reproduce.

Usage:
    python3 torch_reference.py BATCH.jsonl     (or "-" for stdin)

Each input line: {"id": ..., "genotype": {...}, "skeleton": {...} or a preset name}.
Each output line (stdout, one per input line, same order), one of:
    {"id", "params", "buffers", "macs", "output_shape": [1, classes]}
    {"id", "dead": true}          the cell's output does not depend on its input
    {"id", "error": "..."}        e.g. a sum merge over unequal channel counts

params: numel of module.parameters(); buffers: numel of BN running_mean + running_var;
macs: per sample, from forward hooks on nn.Conv2d / nn.Linear using the real output shape;
output_shape: the shape of the real output of a forward pass at batch 1.
"""

import gc
import json
import sys

import torch
from torch import nn

PRIMITIVES = ("none", "identity", "conv1x1", "conv3x3", "dwconv3x3", "sepconv3x3",
              "maxpool3x3", "avgpool3x3")

PRESETS = {
    "proxy": {"input": [3, 32, 32], "classes": 10, "stride": 1, "pool": False,
              "stages": [(1, 16), (1, 32), (1, 64)]},
    "full": {"input": [3, 32, 32], "classes": 10, "stride": 1, "pool": False,
             "stages": [(2, 64), (2, 128), (2, 256)]},
    "full224": {"input": [3, 224, 224], "classes": 1000, "stride": 2, "pool": True,
                "stages": [(1, 64), (2, 128), (2, 256), (1, 512)]},
}

# Guard so a hostile line cannot exhaust memory in the oracle itself.
MAX_MODULES = 400_000


class RefError(Exception):
    pass


class DeadCell(Exception):
    pass


def preset_skeleton(name):
    p = PRESETS.get(name)
    if p is None:
        raise RefError("unknown preset %r" % name)
    c, h, w = p["input"]
    return {
        "format": "skeleton/1",
        "input": {"channels": c, "height": h, "width": w},
        "classes": p["classes"],
        "stem": {"op": "conv3x3", "stride": p["stride"], "pool": p["pool"]},
        "stages": [{"cells": n, "channels": ch} for n, ch in p["stages"]],
        "reduction": "sepconv3x3",
        "merge": "concat",
    }


def bn_relu(c):
    return [nn.BatchNorm2d(c, eps=1e-5, momentum=0.1), nn.ReLU()]


def make_primitive(op, cin, c):
    """Returns (module, output channels) for one level-0 op."""
    if op == "identity":
        return nn.Identity(), cin
    if op == "conv1x1":
        return nn.Sequential(nn.Conv2d(cin, c, 1, bias=False), *bn_relu(c)), c
    if op == "conv3x3":
        return nn.Sequential(nn.Conv2d(cin, c, 3, padding=1, bias=False), *bn_relu(c)), c
    if op == "dwconv3x3":
        return nn.Sequential(nn.Conv2d(cin, cin, 3, padding=1, groups=cin, bias=False),
                             *bn_relu(cin)), cin
    if op == "sepconv3x3":
        return nn.Sequential(nn.Conv2d(cin, cin, 3, padding=1, groups=cin, bias=False),
                             nn.Conv2d(cin, c, 1, bias=False), *bn_relu(c)), c
    if op == "maxpool3x3":
        return nn.MaxPool2d(3, stride=1, padding=1), cin
    if op == "avgpool3x3":
        return nn.AvgPool2d(3, stride=1, padding=1, count_include_pad=False), cin
    raise RefError("unknown primitive %r" % op)


class Genotype:
    """Parsed levels plus, per motif, the pruned plan (which edges are actually emitted)."""

    def __init__(self, g):
        if not isinstance(g, dict) or g.get("format") != "genotype/1":
            raise RefError("genotype format must be genotype/1")
        levels = g.get("levels")
        if not isinstance(levels, list) or not levels:
            raise RefError("genotype needs at least one level")
        self.levels = []
        for k, lv in enumerate(levels):
            n = lv["nodes"]
            if not isinstance(n, int) or n < 2 or n > 64:
                raise RefError("levels[%d].nodes out of range" % k)
            motifs = {}
            for name, m in lv["motifs"].items():
                if name in PRIMITIVES:
                    raise RefError("motif name %r shadows a primitive" % name)
                edges = []
                seen = set()
                for e in m["edges"]:
                    i, j, op = e
                    if not (0 <= i < j <= n - 1):
                        raise RefError("bad edge %r in motif %r" % (e, name))
                    if (i, j) in seen:
                        raise RefError("duplicate pair %r in motif %r" % ((i, j), name))
                    seen.add((i, j))
                    if k == 0:
                        if op not in PRIMITIVES:
                            raise RefError("unknown primitive %r" % op)
                    elif op not in ("none", "identity") and op not in self.levels[k - 1][1]:
                        raise RefError("unknown op %r at level %d" % (op, k))
                    edges.append((i, j, op))
                motifs[name] = edges
            self.levels.append((n, motifs))
        if len(self.levels[-1][1]) != 1:
            raise RefError("last level must hold exactly one motif")
        self.cell = next(iter(self.levels[-1][1]))
        self.top = len(self.levels) - 1
        self._plans = {}

    def plan(self, k, name):
        """None if the motif's output is dead, else (n, {j: [(i, op), ...] sorted by i})."""
        key = (k, name)
        if key in self._plans:
            return self._plans[key]
        n, motifs = self.levels[k]
        live_edges = []
        live = {0}
        # Edges point forward, so ascending j visits every source before its target.
        for i, j, op in sorted(motifs[name], key=lambda e: (e[1], e[0])):
            if op == "none" or i not in live:
                continue
            if k > 0 and op != "identity" and self.plan(k - 1, op) is None:
                continue  # a dead sub-motif acts as none
            live_edges.append((i, j, op))
            live.add(j)
        if n - 1 not in live:
            self._plans[key] = None
            return None
        # Keep only edges whose result can still reach the output node.
        useful = {n - 1}
        for i, j, op in sorted(live_edges, key=lambda e: -e[1]):
            if j in useful:
                useful.add(i)
        inputs = {}
        for i, j, op in live_edges:
            if j in useful:
                inputs.setdefault(j, []).append((i, op))
        for j in inputs:
            inputs[j].sort(key=lambda t: t[0])
        result = (n, inputs)
        self._plans[key] = result
        return result


class Motif(nn.Module):
    """One expanded use of a motif; every use gets its own weights."""

    def __init__(self, geno, k, name, cin, c, merge, counter):
        super().__init__()
        n, inputs = geno.plan(k, name)
        self.order = sorted(inputs)
        self.wiring = {}
        self.ops = nn.ModuleDict()
        self.merges = nn.ModuleDict()
        chans = {0: cin}
        for j in self.order:
            srcs = []
            for i, op in inputs[j]:
                key = "e%d_%d" % (i, j)
                if k == 0:
                    mod, cout = make_primitive(op, chans[i], c)
                elif op == "identity":
                    mod, cout = nn.Identity(), chans[i]
                else:
                    mod = Motif(geno, k - 1, op, chans[i], c, merge, counter)
                    cout = mod.out_channels
                counter[0] += 1
                if counter[0] > MAX_MODULES:
                    raise RefError("reference: expanded network too large to build")
                self.ops[key] = mod
                srcs.append((i, key, cout))
            self.wiring[j] = [(i, key) for i, key, _ in srcs]
            if len(srcs) == 1:
                chans[j] = srcs[0][2]
            elif merge == "concat":
                total = sum(s[2] for s in srcs)
                self.merges["m%d" % j] = nn.Sequential(
                    nn.Conv2d(total, c, 1, bias=False), *bn_relu(c))
                chans[j] = c
            elif merge == "sum":
                cs = sorted({s[2] for s in srcs})
                if len(cs) != 1:
                    raise RefError("sum merge at node %d of motif %r over unequal channels %s"
                                   % (j, name, cs))
                chans[j] = cs[0]
            else:
                raise RefError("unknown merge %r" % merge)
        self.merge = merge
        self.out_node = n - 1
        self.out_channels = chans[n - 1]

    def forward(self, x):
        vals = {0: x}
        for j in self.order:
            ins = [self.ops[key](vals[i]) for i, key in self.wiring[j]]
            if len(ins) == 1:
                vals[j] = ins[0]
            elif self.merge == "concat":
                vals[j] = self.merges["m%d" % j](torch.cat(ins, dim=1))
            else:
                acc = ins[0]
                for t in ins[1:]:
                    acc = acc + t
                vals[j] = acc
        return vals[self.out_node]


def build_network(geno, sk):
    if isinstance(sk, str):
        sk = preset_skeleton(sk)
    inp = sk["input"]
    cin = inp["channels"]
    stages = sk["stages"]
    merge = sk.get("merge", "concat")
    reduction = sk.get("reduction", "sepconv3x3")
    stem = sk["stem"]
    if stem.get("op", "conv3x3") != "conv3x3":
        raise RefError("unknown stem op %r" % stem.get("op"))
    if geno.plan(geno.top, geno.cell) is None:
        raise DeadCell()

    layers = []
    c0 = stages[0]["channels"]
    layers += [nn.Conv2d(cin, c0, 3, stride=stem.get("stride", 1), padding=1, bias=False),
               *bn_relu(c0)]
    if stem.get("pool", False):
        layers.append(nn.MaxPool2d(3, stride=2, padding=1))
    counter = [0]
    for t, st in enumerate(stages):
        c = st["channels"]
        if t > 0:
            prev = stages[t - 1]["channels"]
            if reduction == "sepconv3x3":
                layers += [nn.Conv2d(prev, prev, 3, stride=2, padding=1, groups=prev, bias=False),
                           nn.Conv2d(prev, c, 1, bias=False), *bn_relu(c)]
            elif reduction == "conv3x3":
                layers += [nn.Conv2d(prev, c, 3, stride=2, padding=1, bias=False), *bn_relu(c)]
            else:
                raise RefError("unknown reduction %r" % reduction)
        for _ in range(st["cells"]):
            cell = Motif(geno, geno.top, geno.cell, c, c, merge, counter)
            if cell.out_channels != c:
                # Cannot happen with the contract's ops (the cell input has C channels), but the
                # next layer's width depends on it, so fail loudly rather than guess.
                raise RefError("cell output has %d channels, stage expects %d"
                               % (cell.out_channels, c))
            layers.append(cell)
    layers += [nn.AdaptiveAvgPool2d(1), nn.Flatten(1),
               nn.Linear(stages[-1]["channels"], sk["classes"], bias=True)]
    return nn.Sequential(*layers), (cin, inp["height"], inp["width"])


def measure(model, shape):
    params = sum(p.numel() for p in model.parameters())
    buffers = sum(b.numel() for name, b in model.named_buffers()
                  if name.endswith("running_mean") or name.endswith("running_var"))
    macs = [0]

    def conv_hook(mod, args, out):
        _, cout, h, w = out.shape
        kh, kw = mod.kernel_size
        macs[0] += cout * h * w * (mod.in_channels // mod.groups) * kh * kw

    def linear_hook(mod, args, out):
        macs[0] += mod.in_features * mod.out_features

    for m in model.modules():
        if isinstance(m, nn.Conv2d):
            m.register_forward_hook(conv_hook)
        elif isinstance(m, nn.Linear):
            m.register_forward_hook(linear_hook)
    model.eval()
    gen = torch.Generator().manual_seed(0)
    x = torch.randn(1, *shape, generator=gen)
    with torch.no_grad():
        y = model(x)
    return {"params": int(params), "buffers": int(buffers), "macs": int(macs[0]),
            "output_shape": [int(d) for d in y.shape]}


def run_line(obj):
    geno = Genotype(obj["genotype"])
    model, shape = build_network(geno, obj["skeleton"])
    try:
        return measure(model, shape)
    finally:
        del model


def main(argv):
    if len(argv) != 2:
        sys.stderr.write("usage: torch_reference.py BATCH.jsonl|-\n")
        return 2
    src = sys.stdin if argv[1] == "-" else open(argv[1], encoding="utf-8")
    torch.set_grad_enabled(False)
    failed = False
    with src:
        for lineno, line in enumerate(src, 1):
            if not line.strip():
                continue
            rid = "line-%d" % lineno
            try:
                obj = json.loads(line)
                rid = obj.get("id", rid)
                out = {"id": rid}
                out.update(run_line(obj))
            except DeadCell:
                out = {"id": rid, "dead": True}
            except (RefError, KeyError, TypeError, ValueError) as e:
                out = {"id": rid, "error": " ".join(("%s: %s" % (type(e).__name__, e)).split())}
            except Exception as e:  # keep going: one bad line must not hide the others
                failed = True
                out = {"id": rid, "error": " ".join(("%s: %s" % (type(e).__name__, e)).split())}
            sys.stdout.write(json.dumps(out) + "\n")
            sys.stdout.flush()
            gc.collect()
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
