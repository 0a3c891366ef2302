#!/usr/bin/python3
"""Independent PyTorch rebuild of the compiler's contract, used as the test oracle.

Written from the contract (sections 1-4 and 3.1), not from the C# code. It reads genotype +
resolved skeleton pairs and builds each network from torch.nn layers (PyTorch, Debian's
python3-torch, is the source of the layer semantics): hierarchical motif expansion, merge rules,
dead-code removal, stem, reductions, head, and every primitive kind of section 3.1 with its
parameters (nn.Conv2d with dilation, groups and non-square kernels, nn.ReLU6, nn.SiLU,
nn.Hardswish, a squeeze-excitation module, inverted bottlenecks, repeated separable convolutions,
pools of any odd window).

The module tree is named after the ONNX node names the project fixed (NodePath): the module at
qualified name "stage0.cell0.e2:reef.e0:sepconv3x3.dw" is the node "stage0/cell0/e2:reef/e0:sepconv3x3/dw".
(torch forbids "." inside a module name, so a "." of a motif name is written as U+2024 in the
module tree and turned back into "." in the node name.)

Usage:
    python3 torch_reference.py BATCH.jsonl     (or "-" for stdin)

Each input line: {"id", "genotype": {...}, "skeleton": {...} or a preset name, "opset": 17,
                  optional "onnx": MODEL.onnx, "input": X.bin, "shape": [N, C, H, W], "logits": Y.bin}
X.bin and Y.bin are raw little-endian float32: the input and ONNX Runtime's logits for it.

Each output line (stdout, one per input line, same order), one of:
    {"id", "params", "buffers", "macs", "output_shape", "ops", "nodes",
     and with "onnx": "load_error" or "node_mismatch" when something is wrong, else "logit_error"}
    {"id", "dead": true}          the cell's output does not depend on its input
    {"id", "error": "..."}        the line cannot be built (e.g. a sum merge over unequal channels)

params: numel of module.parameters(); buffers: numel of BN running_mean + running_var;
macs: per sample, from forward hooks on nn.Conv2d / nn.Linear using the real output shape
(contract section 4: Cout * Hout * Wout * Cin/group * kH * kW, and in * out);
output_shape: the shape of the real output of the forward pass;
ops: ONNX op type -> node count, derived from this module tree (each leaf module's ONNX form);
nodes: how many ONNX nodes this module tree stands for;
load_error: the ONNX file's initializers do not fit this module tree one to one, by name and shape;
node_mismatch: the ONNX file's node names / op types differ from the ones this tree predicts;
logit_error: max |torch - onnxruntime| / max(1, max |onnxruntime|) over the logits, with the
  weights loaded from the ONNX file's initializers by their hierarchical names.
Exit code: 0 every line answered, 1 some line hit an unexpected exception, 2 usage, 3 a library is missing.
"""

import gc
import json
import math
import re
import sys
from collections import Counter, OrderedDict

try:
    import numpy as np
    import torch
    from torch import nn
except Exception as e:  # fail loudly so the calling test cannot mistake this for a pass or skip
    sys.stderr.write("torch_reference.py: cannot import numpy/torch (%s); install Debian's python3-torch\n" % e)
    sys.exit(3)

# --- Contract section 3.1: the vocabulary ------------------------------------------------------

ACTIVATIONS = ("relu", "relu6", "silu", "hardswish", "none")
# Parameters each kind takes (besides "kind").
KIND_PARAMS = {
    "conv": ("kernel", "dilation", "act"),
    "dwconv": ("kernel", "dilation", "act"),
    "sepconv": ("kernel", "dilation", "repeat", "act"),
    "factorized": ("kernel", "act"),
    "maxpool": ("kernel",),
    "avgpool": ("kernel",),
    "mbconv": ("kernel", "expand", "se", "act"),
}
DEFAULTS = {"dilation": 1, "repeat": 1, "expand": 6, "se": 0, "act": "relu"}
# The built-ins are declarations themselves (contract 3.1).
BUILTINS = {
    "conv1x1": {"kind": "conv", "kernel": 1},
    "conv3x3": {"kind": "conv", "kernel": 3},
    "dwconv3x3": {"kind": "dwconv", "kernel": 3},
    "sepconv3x3": {"kind": "sepconv", "kernel": 3},
    "maxpool3x3": {"kind": "maxpool", "kernel": 3},
    "avgpool3x3": {"kind": "avgpool", "kernel": 3},
}
STRUCTURAL = ("none", "identity")
DECLARED_NAME = re.compile(r"[a-z][a-z0-9_]{0,31}\Z")

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
# "." is not allowed inside a torch module name; motif names may hold one.
DOT = "\u2024"


class RefError(Exception):
    pass


class DeadCell(Exception):
    pass


class LoadError(Exception):
    pass


def is_int(v):
    return isinstance(v, int) and not isinstance(v, bool)


def resolve_declaration(name, decl):
    """A declaration with every parameter filled in (defaults of contract 3.1), or RefError."""
    if not isinstance(decl, dict) or "kind" not in decl:
        raise RefError("primitives.%s: needs a kind" % name)
    kind = decl["kind"]
    if kind not in KIND_PARAMS:
        raise RefError("primitives.%s.kind: unknown kind %r" % (name, kind))
    allowed = KIND_PARAMS[kind]
    for key in decl:
        if key != "kind" and key not in allowed:
            raise RefError("primitives.%s.%s: kind %s takes no such parameter" % (name, key, kind))
    spec = {"kind": kind}
    for key in allowed:
        spec[key] = decl.get(key, DEFAULTS.get(key))
    k = spec["kernel"]
    low = 1 if kind == "conv" else 3
    if not is_int(k) or k % 2 == 0 or not low <= k <= 7:
        raise RefError("primitives.%s.kernel: %r out of range" % (name, k))
    if "dilation" in spec and not (is_int(spec["dilation"]) and 1 <= spec["dilation"] <= 4):
        raise RefError("primitives.%s.dilation: %r out of range" % (name, spec["dilation"]))
    if "repeat" in spec and spec["repeat"] not in (1, 2):
        raise RefError("primitives.%s.repeat: %r out of range" % (name, spec["repeat"]))
    if "expand" in spec and not (is_int(spec["expand"]) and 1 <= spec["expand"] <= 8):
        raise RefError("primitives.%s.expand: %r out of range" % (name, spec["expand"]))
    if "se" in spec:
        se = spec["se"]
        if isinstance(se, bool) or not isinstance(se, (int, float)) or not 0 <= se <= 1:
            raise RefError("primitives.%s.se: %r out of range" % (name, se))
    if "act" in spec and spec["act"] not in ACTIVATIONS:
        raise RefError("primitives.%s.act: unknown activation %r" % (name, spec["act"]))
    return spec


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


# --- Layers ------------------------------------------------------------------------------------

class Concat(nn.Module):
    """ONNX Concat along channels (axis 1)."""

    def forward(self, parts):
        return torch.cat(parts, dim=1)


class SumAll(nn.Module):
    """One ONNX Sum over all its inputs."""

    def forward(self, terms):
        acc = terms[0]
        for t in terms[1:]:
            acc = acc + t
        return acc


class Mul(nn.Module):
    """ONNX Mul with broadcasting (the squeeze-excitation gate)."""

    def forward(self, x, gate):
        return x * gate


def seq(layers):
    return nn.Sequential(OrderedDict(layers))


def bn(c):
    # ONNX BatchNormalization momentum 0.9 is torch's momentum 0.1; epsilon 1e-5 in both.
    return nn.BatchNorm2d(c, eps=1e-5, momentum=0.1)


ACTIVATION_MODULES = {"relu": nn.ReLU, "relu6": nn.ReLU6, "silu": nn.SiLU, "hardswish": nn.Hardswish}


def act_layers(act, suffix=""):
    """The activation as a named layer: its module name is the ONNX output node's last segment."""
    if act == "none":
        return []
    return [(act + suffix, ACTIVATION_MODULES[act]())]


def conv(cin, cout, kernel, dilation=1, groups=1, bias=False):
    """Stride 1 and "same" padding p = dilation * (k - 1) / 2 on each axis (contract 3.1)."""
    kh, kw = kernel if isinstance(kernel, tuple) else (kernel, kernel)
    pad = (dilation * (kh - 1) // 2, dilation * (kw - 1) // 2)
    return nn.Conv2d(cin, cout, (kh, kw), stride=1, padding=pad, dilation=dilation, groups=groups, bias=bias)


def conv_bn_act(cin, cout, kernel, dilation, groups, act):
    return [("conv", conv(cin, cout, kernel, dilation, groups)), ("bn", bn(cout))] + act_layers(act)


class SqueezeExcitation(nn.Module):
    """GlobalAveragePool -> Conv 1x1 with bias (E -> R) -> A' -> Conv 1x1 with bias (R -> E) -> Sigmoid -> Mul."""

    def __init__(self, e, r, act):
        super().__init__()
        self.gap = nn.AdaptiveAvgPool2d(1)
        self.reduce = nn.Conv2d(e, r, 1, bias=True)
        self.act_name = act
        self.add_module(act, ACTIVATION_MODULES[act]())
        self.expand = nn.Conv2d(r, e, 1, bias=True)
        self.sigmoid = nn.Sigmoid()
        self.mul = Mul()

    def forward(self, x):
        s = getattr(self, self.act_name)(self.reduce(self.gap(x)))
        return self.mul(x, self.sigmoid(self.expand(s)))


class InvertedBottleneck(nn.Module):
    """mbconv: [expand 1x1] -> depthwise k x k -> [squeeze-excitation] -> linear 1x1 projection."""

    def __init__(self, cin, c, kernel, expand, se, act):
        super().__init__()
        e = expand * cin
        if expand > 1:
            self.expand = seq(conv_bn_act(cin, e, 1, 1, 1, act))
        self.dw = seq(conv_bn_act(e, e, kernel, 1, e, act))
        if se > 0:
            # R counts from the op's input channels; A' is A, except that none gives Relu.
            self.se = SqueezeExcitation(e, max(1, math.floor(cin * se)), "relu" if act == "none" else act)
        self.project = seq([("conv", conv(e, c, 1)), ("bn", bn(c))])

    def forward(self, x):
        for part in self.children():
            x = part(x)
        return x


def make_primitive(spec, cin, c):
    """Returns (module, output channels) for one level-0 op given its resolved declaration."""
    kind = spec["kind"]
    k = spec["kernel"]
    if kind == "conv":
        return seq(conv_bn_act(cin, c, k, spec["dilation"], 1, spec["act"])), c
    if kind == "dwconv":
        return seq(conv_bn_act(cin, cin, k, spec["dilation"], cin, spec["act"])), cin
    if kind == "sepconv":
        layers, ch = [], cin
        for r in range(spec["repeat"]):
            s = "" if r == 0 else str(r + 1)
            layers += [("dw" + s, conv(ch, ch, k, spec["dilation"], ch)), ("pw" + s, conv(ch, c, 1)),
                       ("bn" + s, bn(c))] + act_layers(spec["act"], s)
            ch = c
        return seq(layers), c
    if kind == "factorized":
        return seq([("row", conv(cin, c, (1, k))), ("col", conv(c, c, (k, 1))), ("bn", bn(c))]
                   + act_layers(spec["act"])), c
    if kind == "maxpool":
        return seq([("pool", nn.MaxPool2d(k, stride=1, padding=(k - 1) // 2))]), cin
    if kind == "avgpool":
        return seq([("pool", nn.AvgPool2d(k, stride=1, padding=(k - 1) // 2, count_include_pad=False))]), cin
    if kind == "mbconv":
        return InvertedBottleneck(cin, c, k, spec["expand"], spec["se"], spec["act"]), c
    raise RefError("unknown kind %r" % kind)


# --- Genotype ----------------------------------------------------------------------------------

class Genotype:
    """Parsed levels and declarations plus, per motif, the pruned plan (which edges are emitted)."""

    def __init__(self, g):
        if not isinstance(g, dict) or g.get("format") != "genotype/1":
            raise RefError("genotype format must be genotype/1")
        levels = g.get("levels")
        if not isinstance(levels, list) or not levels:
            raise RefError("genotype needs at least one level")
        motif_names = {name for lv in levels for name in lv["motifs"]}
        self.primitives = {name: resolve_declaration(name, decl) for name, decl in BUILTINS.items()}
        for name, decl in (g.get("primitives") or {}).items():
            if not DECLARED_NAME.match(name) or name in BUILTINS or name in STRUCTURAL or name in motif_names:
                raise RefError("primitives.%s: name not allowed" % name)
            self.primitives[name] = resolve_declaration(name, decl)
        self.levels = []
        for k, lv in enumerate(levels):
            n = lv["nodes"]
            if not is_int(n) or n < 2 or n > 64:
                raise RefError("levels[%d].nodes out of range" % k)
            motifs = {}
            for name, m in lv["motifs"].items():
                if name in self.primitives or name in STRUCTURAL:
                    raise RefError("motif name %r shadows a primitive" % name)
                edges = []
                seen = set()
                for index, e in enumerate(m["edges"]):
                    i, j, op = e
                    if not (0 <= i < j <= n - 1):
                        raise RefError("bad edge %r in motif %r" % (e, name))
                    if (i, j) in seen:
                        raise RefError("duplicate pair %r in motif %r" % ((i, j), name))
                    seen.add((i, j))
                    if k == 0:
                        if op not in self.primitives and op not in STRUCTURAL:
                            raise RefError("unknown primitive %r" % op)
                    elif op not in STRUCTURAL and op not in self.levels[k - 1][1]:
                        raise RefError("unknown op %r at level %d" % (op, k))
                    edges.append((i, j, op, index))
                motifs[name] = edges
            self.levels.append((n, motifs))
        if len(self.levels[-1][1]) != 1:
            raise RefError("last level must hold exactly one motif")
        self.cell = next(iter(self.levels[-1][1]))
        self.top = len(self.levels) - 1
        self._plans = {}

    def plan(self, k, name):
        """None if the motif's output is dead, else (n, {j: [(i, op, index), ...] sorted by i})."""
        key = (k, name)
        if key in self._plans:
            return self._plans[key]
        n, motifs = self.levels[k]
        live_edges = []
        live = {0}
        # Edges point forward, so ascending j visits every source before its target.
        for i, j, op, index in sorted(motifs[name], key=lambda e: (e[1], e[0])):
            if op == "none" or i not in live:
                continue
            if k > 0 and op != "identity" and self.plan(k - 1, op) is None:
                continue  # a dead sub-motif acts as none
            live_edges.append((i, j, op, index))
            live.add(j)
        if n - 1 not in live:
            self._plans[key] = None
            return None
        # Keep only edges whose result can still reach the output node.
        useful = {n - 1}
        for i, j, op, index in sorted(live_edges, key=lambda e: -e[1]):
            if j in useful:
                useful.add(i)
        inputs = {}
        for i, j, op, index in live_edges:
            if j in useful:
                inputs.setdefault(j, []).append((i, op, index))
        for j in inputs:
            inputs[j].sort(key=lambda t: t[0])
        result = (n, inputs)
        self._plans[key] = result
        return result


def module_key(segment):
    return segment.replace(".", DOT)


class Motif(nn.Module):
    """One expanded use of a motif; every use gets its own weights. Children: e{index}:{op}, n{j}:{merge}."""

    def __init__(self, geno, k, name, cin, c, merge, counter):
        super().__init__()
        n, inputs = geno.plan(k, name)
        self.order = sorted(inputs)
        self.wiring = {}
        chans = {0: cin}
        for j in self.order:
            srcs = []
            for i, op, index in inputs[j]:
                key = module_key("e%d:%s" % (index, op))
                if op == "identity":
                    mod, cout = nn.Identity(), chans[i]
                elif k == 0:
                    mod, cout = make_primitive(geno.primitives[op], chans[i], c)
                else:
                    mod = Motif(geno, k - 1, op, chans[i], c, merge, counter)
                    cout = mod.out_channels
                counter[0] += 1
                if counter[0] > MAX_MODULES:
                    raise RefError("reference: expanded network too large to build")
                self.add_module(key, mod)
                srcs.append((i, key, cout))
            merge_key = None
            if len(srcs) == 1:
                chans[j] = srcs[0][2]
            elif merge == "concat":
                total = sum(s[2] for s in srcs)
                merge_key = "n%d:concat" % j
                self.add_module(merge_key, seq([("cat", Concat())] + conv_bn_act(total, c, 1, 1, 1, "relu")))
                chans[j] = c
            elif merge == "sum":
                cs = sorted({s[2] for s in srcs})
                if len(cs) != 1:
                    raise RefError("sum merge at node %d of motif %r over unequal channels %s"
                                   % (j, name, cs))
                merge_key = "n%d:sum" % j
                self.add_module(merge_key, SumAll())
                chans[j] = cs[0]
            else:
                raise RefError("unknown merge %r" % merge)
            self.wiring[j] = ([(i, key) for i, key, _ in srcs], merge_key)
        self.out_node = n - 1
        self.out_channels = chans[n - 1]

    def forward(self, x):
        vals = {0: x}
        for j in self.order:
            sources, merge_key = self.wiring[j]
            ins = [getattr(self, key)(vals[i]) for i, key in sources]
            vals[j] = ins[0] if merge_key is None else getattr(self, merge_key)(ins)
        return vals[self.out_node]


class Network(nn.Module):
    """stem, stage0 (cell0, cell1, ...), reduce0, stage1, ..., head: registered in running order."""

    def forward(self, x):
        for part in self.children():
            if isinstance(part, nn.ModuleDict):
                for cell in part.values():
                    x = cell(x)
            else:
                x = part(x)
        return x


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

    net = Network()
    c0 = stages[0]["channels"]
    stem_layers = [("conv", nn.Conv2d(cin, c0, 3, stride=stem.get("stride", 1), padding=1, bias=False)),
                   ("bn", bn(c0)), ("relu", nn.ReLU())]
    if stem.get("pool", False):
        stem_layers.append(("pool", nn.MaxPool2d(3, stride=2, padding=1)))
    net.add_module("stem", seq(stem_layers))
    counter = [0]
    for t, st in enumerate(stages):
        c = st["channels"]
        if t > 0:
            prev = stages[t - 1]["channels"]
            if reduction == "sepconv3x3":
                layers = [("dw", nn.Conv2d(prev, prev, 3, stride=2, padding=1, groups=prev, bias=False)),
                          ("pw", nn.Conv2d(prev, c, 1, bias=False)), ("bn", bn(c)), ("relu", nn.ReLU())]
            elif reduction == "conv3x3":
                layers = [("conv", nn.Conv2d(prev, c, 3, stride=2, padding=1, bias=False)),
                          ("bn", bn(c)), ("relu", nn.ReLU())]
            else:
                raise RefError("unknown reduction %r" % reduction)
            net.add_module("reduce%d" % (t - 1), seq(layers))
        cells = nn.ModuleDict()
        for index in range(st["cells"]):
            cell = Motif(geno, geno.top, geno.cell, c, c, merge, counter)
            if cell.out_channels != c:
                # Cannot happen with the contract's ops (the cell input has C channels), but the
                # next layer's width depends on it, so fail loudly rather than guess.
                raise RefError("cell output has %d channels, stage expects %d" % (cell.out_channels, c))
            cells["cell%d" % index] = cell
        net.add_module("stage%d" % t, cells)
    net.add_module("head", seq([("gap", nn.AdaptiveAvgPool2d(1)), ("flatten", nn.Flatten(1)),
                                ("gemm", nn.Linear(stages[-1]["channels"], sk["classes"], bias=True))]))
    return net, (cin, inp["height"], inp["width"])


# --- From the module tree to ONNX names and op types -----------------------------------------------

def node_name(qualified):
    return qualified.replace(".", "/").replace(DOT, ".")


def onnx_nodes(name, m, opset):
    """The ONNX nodes (name, op type) one leaf module stands for (contract 3 and 3.1, NodePath)."""
    if isinstance(m, nn.Conv2d):
        return [(name, "Conv")]
    if isinstance(m, nn.BatchNorm2d):
        return [(name, "BatchNormalization")]
    if isinstance(m, nn.ReLU):
        return [(name, "Relu")]
    if isinstance(m, nn.ReLU6):
        return [(name, "Clip")]
    if isinstance(m, nn.SiLU):
        return [(name + "/sigmoid", "Sigmoid"), (name, "Mul")]
    if isinstance(m, nn.Hardswish):
        if opset >= 14:
            return [(name, "HardSwish")]
        return [(name + "/hsigmoid", "HardSigmoid"), (name, "Mul")]
    if isinstance(m, nn.Sigmoid):
        return [(name, "Sigmoid")]
    if isinstance(m, nn.MaxPool2d):
        return [(name, "MaxPool")]
    if isinstance(m, nn.AvgPool2d):
        return [(name, "AveragePool")]
    if isinstance(m, nn.AdaptiveAvgPool2d):
        return [(name, "GlobalAveragePool")]
    if isinstance(m, nn.Flatten):
        return [(name, "Flatten")]
    if isinstance(m, nn.Linear):
        return [(name, "Gemm")]
    if isinstance(m, Concat):
        return [(name, "Concat")]
    if isinstance(m, SumAll):
        return [(name, "Sum")]
    if isinstance(m, Mul):
        return [(name, "Mul")]
    if isinstance(m, nn.Identity):
        return []
    raise RefError("no ONNX form known for module %s at %s" % (type(m).__name__, name))


def leaves(model):
    for qualified, m in model.named_modules():
        if qualified and next(m.children(), None) is None:
            yield node_name(qualified), m


def expected_nodes(model, opset):
    nodes = []
    for name, m in leaves(model):
        nodes += onnx_nodes(name, m, opset)
    return nodes


# --- Weights from the ONNX file ----------------------------------------------------------------

def load_onnx(path):
    try:
        import onnx
        from onnx import numpy_helper
    except Exception as e:
        sys.stderr.write("torch_reference.py: cannot import onnx (%s); install Debian's python3-onnx\n" % e)
        sys.exit(3)
    model = onnx.load(path)
    inits = {t.name: numpy_helper.to_array(t) for t in model.graph.initializer}
    nodes = [(n.name, n.op_type) for n in model.graph.node]
    return inits, nodes


def load_weights(model, inits):
    """Copies every initializer into the module it names; each must be used exactly once."""
    used = set()

    def take(name, target):
        if name not in inits:
            raise LoadError("no initializer %s" % name)
        if name in used:
            raise LoadError("initializer %s wanted twice" % name)
        used.add(name)
        value = inits[name]
        if tuple(value.shape) != tuple(target.shape):
            raise LoadError("initializer %s has shape %s, the module wants %s"
                            % (name, list(value.shape), list(target.shape)))
        target.copy_(torch.from_numpy(np.array(value, dtype=np.float32)))  # a writable copy

    for name, m in leaves(model):
        if isinstance(m, nn.Conv2d):
            take(name + ".weight", m.weight)
            if m.bias is not None:
                take(name + ".bias", m.bias)
        elif isinstance(m, nn.BatchNorm2d):
            take(name + ".scale", m.weight)
            take(name + ".bias", m.bias)
            take(name + ".mean", m.running_mean)
            take(name + ".var", m.running_var)
        elif isinstance(m, nn.Linear):
            take(name + ".weight", m.weight)
            take(name + ".bias", m.bias)
        elif isinstance(m, nn.ReLU6):
            # Clip's bounds are scalar constant initializers (contract 3.1), not parameters.
            for suffix, want in ((".min", 0.0), (".max", 6.0)):
                bound = torch.zeros(())
                take(name + suffix, bound)
                if float(bound) != want:
                    raise LoadError("initializer %s is %r, not %r" % (name + suffix, float(bound), want))
    unused = sorted(set(inits) - used)
    if unused:
        raise LoadError("%d initializers belong to no module, e.g. %s" % (len(unused), ", ".join(unused[:5])))


def compare_nodes(expected, actual):
    """None when the ONNX graph holds exactly the predicted nodes (names and op types), else a message."""
    want = dict(expected)
    have = dict(actual)
    if len(want) != len(expected):
        return "the reference predicts duplicate node names"
    if len(have) != len(actual):
        return "the ONNX graph has duplicate node names"
    missing = sorted(n for n in want if n not in have)
    extra = sorted(n for n in have if n not in want)
    wrong = sorted("%s is %s, expected %s" % (n, have[n], want[n]) for n in want if n in have and have[n] != want[n])
    if not (missing or extra or wrong):
        return None
    parts = []
    if missing:
        parts.append("%d missing from the ONNX graph, e.g. %s" % (len(missing), ", ".join(missing[:4])))
    if extra:
        parts.append("%d not predicted, e.g. %s" % (len(extra), ", ".join(extra[:4])))
    if wrong:
        parts.append("%d of another op type, e.g. %s" % (len(wrong), "; ".join(wrong[:4])))
    return "; ".join(parts)


# --- Running one line --------------------------------------------------------------------------

def run_line(obj):
    geno = Genotype(obj["genotype"])
    opset = obj.get("opset", 17)
    model, shape = build_network(geno, obj["skeleton"])
    model.eval()
    out = {}
    nodes = expected_nodes(model, opset)
    compare = "onnx" in obj
    if compare:
        inits, actual_nodes = load_onnx(obj["onnx"])
        mismatch = compare_nodes(nodes, actual_nodes)
        if mismatch is not None:
            out["node_mismatch"] = mismatch
        try:
            load_weights(model, inits)
        except LoadError as e:
            out["load_error"] = str(e)
        del inits
        batch_shape = tuple(obj["shape"])
        x = torch.from_numpy(np.fromfile(obj["input"], dtype="<f4").reshape(batch_shape))
    else:
        gen = torch.Generator().manual_seed(0)
        x = torch.randn(1, *shape, generator=gen)

    params = sum(p.numel() for p in model.parameters())
    buffers = sum(b.numel() for name, b in model.named_buffers()
                  if name.endswith("running_mean") or name.endswith("running_var"))
    macs = [0]

    def conv_hook(mod, args, y):
        _, cout, h, w = y.shape
        kh, kw = mod.kernel_size
        macs[0] += cout * h * w * (mod.in_channels // mod.groups) * kh * kw

    def linear_hook(mod, args, y):
        macs[0] += mod.in_features * mod.out_features

    for m in model.modules():
        if isinstance(m, nn.Conv2d):
            m.register_forward_hook(conv_hook)
        elif isinstance(m, nn.Linear):
            m.register_forward_hook(linear_hook)
    with torch.no_grad():
        y = model(x)
    out.update({"params": int(params), "buffers": int(buffers), "macs": int(macs[0]),
                "output_shape": [int(d) for d in y.shape],
                "ops": dict(sorted(Counter(op for _, op in nodes).items())), "nodes": len(nodes)})
    if compare and "load_error" not in out:
        ort = np.fromfile(obj["logits"], dtype="<f4")
        mine = y.numpy().reshape(-1)
        if ort.size != mine.size:
            out["load_error"] = "ONNX Runtime gave %d logits, the reference %d" % (ort.size, mine.size)
        else:
            scale = max(1.0, float(np.abs(ort).max()))
            out["logit_error"] = float(np.abs(mine.astype(np.float64) - ort.astype(np.float64)).max()) / scale
    return out


def main(argv):
    if len(argv) != 2:
        sys.stderr.write("usage: torch_reference.py BATCH.jsonl|-\n")
        return 2
    src = sys.stdin if argv[1] == "-" else open(argv[1], encoding="utf-8")
    torch.set_grad_enabled(False)
    torch.set_num_threads(1)  # the test machine's cores are shared by parallel test classes
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
