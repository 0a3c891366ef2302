#!/usr/bin/python3
"""Checks the Python files `cellc export-torch` writes, with Debian's python3-torch and python3-onnx.

Usage:
    python3 torch_export_check.py BATCH.jsonl
    python3 torch_export_check.py --bad-weights MODULE.py MODEL.onnx WORK_DIR

BATCH.jsonl holds one case per line:
    {"id", "module": the generated .py, "onnx": the model `cellc compile` wrote for the same
     genotype and skeleton, "input": raw little-endian float32 images, "input_shape": [N, C, H, W],
     "logits": raw float32 logits ONNX Runtime computed for that input, "train_batch": B}
and the script prints one JSON line per case:
    compiled        python3 -m py_compile accepts the file (py_compile.compile, doraise=True)
    params          sum of p.numel() over model.parameters() of a fresh Network()
    buffers         numel of every BatchNorm running_mean and running_var
    readers_agree   load_onnx_weights with the onnx package and with the file's own protobuf
                    reader give bitwise equal state dicts
    max_abs_diff    max |PyTorch logit - ONNX Runtime logit|, in eval mode with the weights loaded
                    (null if the shapes differ; numbers that are not finite are written as text)
    max_abs_logit   max |ONNX Runtime logit|
    loss_before, loss_after
                    cross-entropy on a fixed random batch (torch.manual_seed(0), B images, random
                    labels) in training mode, before and after one SGD step (lr 0.01 / max(1, |g|),
                    |g| the global gradient norm, so the step is small whatever the gradient scale)
    stem_grad_norm  norm of the stem conv weight's gradient in that step
    no_grad         parameters that got no gradient (must be empty)
or {"id", "error"} when something raised.

--bad-weights writes altered copies of MODEL.onnx into WORK_DIR with the onnx package (one
initializer removed, one extra initializer added, one conv weight flattened to a vector) and loads each
with both readers; prints one JSON line: for each alteration and reader, the error message (or
null if nothing was raised) and whether the network's weights were left untouched.

Exit code: 0 done (the caller judges the figures), 2 usage error, 3 torch or onnx is missing.
"""

import importlib.util
import json
import math
import os
import py_compile
import sys
import traceback

try:
    import onnx
    import torch
    import torch.nn.functional as F
except Exception as e:  # fail loudly so the calling test cannot mistake this for a pass or skip
    sys.stderr.write("torch_export_check.py: cannot import torch or onnx (%s); "
                     "install Debian's python3-torch and python3-onnx\n" % e)
    sys.exit(3)


def load_module(path, name):
    spec = importlib.util.spec_from_file_location(name, path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def read_floats(path, shape):
    with open(path, "rb") as f:
        data = bytearray(f.read())
    return torch.frombuffer(data, dtype=torch.float32).reshape(shape)


def number(x):
    """A float for JSON, or the text "nan"/"inf"/"-inf" (JSON has no such numbers)."""
    x = float(x)
    return x if math.isfinite(x) else str(x)


def running_stats(model):
    return sum(b.numel() for name, b in model.named_buffers()
               if name.endswith(".running_mean") or name.endswith(".running_var"))


def check(case, index):
    result = {"id": case["id"]}
    py_compile.compile(case["module"], doraise=True)
    result["compiled"] = True
    gen = load_module(case["module"], "exported_%d" % index)

    # Counted on a fresh Network(), not through build(), which checks the same figures itself.
    model = gen.Network()
    result["params"] = sum(p.numel() for p in model.parameters())
    result["buffers"] = running_stats(model)

    gen.load_onnx_weights(model, case["onnx"], use_onnx=True)
    other = gen.Network()
    gen.load_onnx_weights(other, case["onnx"], use_onnx=False)
    mine, theirs = model.state_dict(), other.state_dict()
    result["readers_agree"] = mine.keys() == theirs.keys() and all(torch.equal(mine[k], theirs[k]) for k in mine)

    shape = case["input_shape"]
    images = read_floats(case["input"], shape)
    expected = read_floats(case["logits"], (shape[0], -1))
    model.eval()
    with torch.no_grad():
        logits = model(images)
    result["logits_shape"] = list(logits.shape)
    result["max_abs_diff"] = number((logits - expected).abs().max()) if logits.shape == expected.shape else None
    result["max_abs_logit"] = number(expected.abs().max())

    # One SGD step in training mode on a fixed random batch.
    model.train()
    torch.manual_seed(0)
    batch = torch.randn([case["train_batch"]] + shape[1:])
    labels = torch.randint(0, gen.CLASSES, (case["train_batch"],))
    model.zero_grad()
    loss = F.cross_entropy(model(batch), labels)
    loss.backward()
    result["loss_before"] = number(loss)
    result["stem_grad_norm"] = number(model.stem.conv.weight.grad.norm())
    result["no_grad"] = [name for name, p in model.named_parameters() if p.grad is None]
    grads = [p.grad for p in model.parameters() if p.grad is not None]
    norm = math.sqrt(sum(float(g.pow(2).sum()) for g in grads))
    optimizer = torch.optim.SGD(model.parameters(), lr=0.01 / max(1.0, norm))
    optimizer.step()
    with torch.no_grad():
        result["loss_after"] = number(F.cross_entropy(model(batch), labels))
    return result


def run_batch(path):
    torch.set_num_threads(1)
    with open(path) as f:
        cases = [json.loads(line) for line in f if line.strip()]
    for index, case in enumerate(cases):
        try:
            result = check(case, index)
        except Exception as e:
            result = {"id": case["id"], "error": "%s: %s" % (type(e).__name__, e),
                      "trace": traceback.format_exc()}
        print(json.dumps(result), flush=True)


def bad_weights(module_path, onnx_path, work):
    gen = load_module(module_path, "exported_bad")
    original = onnx.load(onnx_path)
    inits = original.graph.initializer
    victim = next(t for t in inits if t.name.endswith(".weight") and len(t.dims) == 4)

    def altered(name, change):
        model = onnx.ModelProto()
        model.CopyFrom(original)
        change(model.graph.initializer)
        path = os.path.join(work, name + ".onnx")
        onnx.save(model, path)
        return path

    def remove(initializers):
        for i, t in enumerate(initializers):
            if t.name == victim.name:
                del initializers[i]
                return

    def add(initializers):
        extra = initializers.add()
        extra.CopyFrom(victim)
        extra.name = "stage0/cell0/e99:ghost/conv.weight"

    def reshape(initializers):
        # The same values as one flat vector: a 4-D weight of another shape.
        t = next(t for t in initializers if t.name == victim.name)
        count = 1
        for d in t.dims:
            count *= d
        del t.dims[:]
        t.dims.extend([count])

    report = {"victim": victim.name}
    for name, change in (("missing", remove), ("extra", add), ("misshaped", reshape)):
        path = altered(name, change)
        for reader, use_onnx in (("onnx", True), ("builtin", False)):
            model = gen.Network()
            before = {k: v.clone() for k, v in model.state_dict().items()}
            try:
                gen.load_onnx_weights(model, path, use_onnx=use_onnx)
                message = None
            except gen.WeightLoadError as e:
                message = str(e)
            after = model.state_dict()
            untouched = all(torch.equal(before[k], after[k]) for k in before)
            report["%s_%s" % (name, reader)] = {"error": message, "untouched": untouched}
    print(json.dumps(report), flush=True)


def main(argv):
    if len(argv) == 2:
        run_batch(argv[1])
        return 0
    if len(argv) == 5 and argv[1] == "--bad-weights":
        bad_weights(argv[2], argv[3], argv[4])
        return 0
    sys.stderr.write(__doc__)
    return 2


if __name__ == "__main__":
    sys.exit(main(sys.argv))
