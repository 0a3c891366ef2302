#!/usr/bin/python3
"""Exports torchvision classification models to ONNX the way a user would (Debian's
python3-torchvision 0.14 and python3-torch 1.13, torch.onnx.export), and reports PyTorch's own
counts of each, for the `cellc inspect` tests against outside figures.

Usage:
    python3 torchvision_export.py OUT_DIR [MODEL ...]

Each model is built without pretrained weights, then every parameter and buffer is set to random
values (seeded): an untrained model's BatchNorm tensors are all equal (weight 1, bias 0, mean 0,
var 1), and torch.onnx.export shares initializers with equal values, so a reader would see fewer
tensors than PyTorch has. The export keeps BatchNormalization as nodes of its own
(training=TrainingMode.PRESERVE on a model in eval mode, do_constant_folding=False; EVAL mode
folds BN into the preceding Conv), with a dynamic batch axis "B" so that the graph computes
shapes at run time wherever the model reads x.size() (ShuffleNet's channel shuffle).
GoogLeNet and Inception v3 are built without their auxiliary classifiers, which an eval-mode
forward pass (and so the export) never runs.

Prints one JSON line per model:
    model, path, opset, input ([B, 3, S, S]), torch, torchvision
    params       sum of p.numel() over model.parameters() (the trainable parameters)
    buffers      numel of every BatchNorm running_mean and running_var; num_batches_tracked is a
                 training counter that the export does not write, so it is not counted
    batchnorms   BatchNorm layers in the model (each must be a BatchNormalization node)
    macs         per sample, from forward hooks at batch 1 on the shapes PyTorch computes:
                 Conv2d out_channels * Hout * Wout * (in_channels / groups) * kH * kW, Linear in * out
    onnx_shapes  every intermediate tensor whose shape the ONNX reference shape inference
                 (python3-onnx, infer_shapes with data propagation) knows beyond the batch:
                 {name: [dims]} with the batch as "B"
Exit code: 0 written, 2 usage error, 3 a library is missing.
"""

import json
import os
import sys
import time

try:
    import onnx
    from onnx import shape_inference
    import torch
    import torch.nn as nn
    import torchvision
    from torchvision import models
except Exception as e:  # fail loudly so the calling test cannot mistake this for a pass or skip
    sys.stderr.write("torchvision_export.py: cannot import a reference library (%s); "
                     "install Debian's python3-torch, python3-torchvision and python3-onnx\n" % e)
    sys.exit(3)

from torch_macs import torch_macs  # noqa: E402 (after the guarded torch import)

# name: (opset, input side, builder arguments). Opsets alternate between 13 and 17 so that both
# forms of Split, Squeeze, Unsqueeze, Pad and the reductions (attributes or inputs) are exercised.
MODELS = {
    "shufflenet_v2_x1_0": (13, 224, {}),    # channel shuffle: Reshape/Transpose fed by Shape arithmetic; chunk as Slice
    "densenet121": (17, 224, {}),           # dense concatenations; AvgPool exported with an explicit Pad (pads as an input)
    "inception_v3": (13, 299, {"aux_logits": False, "init_weights": False}),  # Pad before count_include_pad AvgPools
    "googlenet": (17, 224, {"aux_logits": False, "init_weights": False}),     # inception blocks, ceil-mode pools
    "squeezenet1_1": (17, 224, {}),         # fire modules (Concat), ceil-mode MaxPool
    "mobilenet_v2": (13, 224, {}),          # depthwise convs, Clip (ReLU6)
    "mobilenet_v3_large": (17, 224, {}),    # hardswish, squeeze-excitation
    "efficientnet_b0": (13, 224, {}),       # SiLU, squeeze-excitation
    "mnasnet0_5": (17, 224, {}),            # head by x.mean([2, 3]) (ReduceMean)
    "regnet_y_400mf": (13, 224, {}),        # grouped convs, squeeze-excitation
    "resnet18": (17, 224, {}),              # residual adds
}


def randomise(model):
    """Distinct random values in every parameter and buffer (see the module docstring)."""
    torch.manual_seed(0)
    with torch.no_grad():
        for p in model.parameters():
            p.normal_(0.0, 0.05)
        for name, b in model.named_buffers():
            if name.endswith("running_var"):
                b.uniform_(0.5, 1.5)
            elif b.dtype.is_floating_point:
                b.normal_(0.0, 0.5)
            else:
                b.random_(0, 1000)


def onnx_shapes(path):
    """Shapes the ONNX reference inference states fully beyond the batch dimension."""
    inferred = shape_inference.infer_shapes(onnx.load(path), strict_mode=True, data_prop=True)
    shapes = {}
    for info in inferred.graph.value_info:
        t = info.type.tensor_type
        if not t.HasField("shape"):
            continue
        dims = t.shape.dim
        if len(dims) == 0 or not all(d.HasField("dim_value") for d in dims[1:]):
            continue
        first = dims[0].dim_value if dims[0].HasField("dim_value") else (dims[0].dim_param or None)
        shapes[info.name] = [first] + [d.dim_value for d in dims[1:]]
    return shapes


def export(name, out_dir):
    opset, side, kwargs = MODELS[name]
    model = models.get_model(name, weights=None, **kwargs)
    randomise(model)
    model.eval()
    example = torch.randn(1, 3, side, side)
    path = os.path.abspath(os.path.join(out_dir, name + ".onnx"))
    start = time.time()
    with torch.no_grad():
        torch.onnx.export(
            model, example, path, input_names=["x"], output_names=["logits"],
            dynamic_axes={"x": {0: "B"}, "logits": {0: "B"}},
            opset_version=opset, do_constant_folding=False,
            training=torch.onnx.TrainingMode.PRESERVE, verbose=False)
    seconds = time.time() - start
    batchnorms = [m for m in model.modules() if isinstance(m, nn.BatchNorm2d)]
    return {
        "model": name, "path": path, "opset": opset, "input": ["B", 3, side, side],
        "params": sum(p.numel() for p in model.parameters()),
        "buffers": sum(m.running_mean.numel() + m.running_var.numel() for m in batchnorms),
        "batchnorms": len(batchnorms),
        "macs": torch_macs(model, example),
        "onnx_shapes": onnx_shapes(path),
        "export_seconds": round(seconds, 2),
        "torch": torch.__version__, "torchvision": torchvision.__version__,
    }


def main(argv):
    if len(argv) < 2 or any(m not in MODELS for m in argv[2:]):
        sys.stderr.write(__doc__)
        sys.stderr.write("models: %s\n" % ", ".join(MODELS))
        return 2
    out_dir = argv[1]
    os.makedirs(out_dir, exist_ok=True)
    for name in argv[2:] or MODELS:
        print(json.dumps(export(name, out_dir)), flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
