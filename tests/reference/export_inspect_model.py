#!/usr/bin/python3
"""Exports a small PyTorch CNN with BatchNorm to ONNX (Debian's python3-torch, torch.onnx.export)
and reports PyTorch's own counts of it, for the `cellc inspect` tests.

Usage:
    python3 export_inspect_model.py OUT_DIR

The network (input [B, 3, 21, 21]; odd sizes so that the floor in the output-size rules matters):
    Conv2d(3, 8, 3, padding=1, bias=True) -> BatchNorm2d(8) -> ReLU -> MaxPool2d(2)
    -> Conv2d(8, 16, 3, stride=2, padding=1, bias=True) -> BatchNorm2d(16) -> ReLU
    -> AdaptiveAvgPool2d(1) -> Flatten -> Linear(16, 5)

Writes two files into OUT_DIR, both opset 13 with do_constant_folding=False and
training=TrainingMode.PRESERVE on a model in eval mode, so that BatchNormalization stays a node
of its own (TrainingMode.EVAL folds it into the Conv). Every BN weight, bias and running
statistic is set to distinct random values: torch.onnx.export replaces initializers with equal
values by Identity nodes, which would hide the running statistics.
    cnn.onnx              dynamic batch axis B only (spatial sizes fixed at 21x21)
    cnn-dynamic-hw.onnx   dynamic B, H and W (spatial sizes symbolic)

Prints one JSON line on stdout with PyTorch's side of the facts:
    params   sum of p.numel() for p in model.parameters()
    buffers  numel of every BatchNorm running_mean and running_var (num_batches_tracked is a
             counter, not exported)
    macs     per sample, from forward hooks on a batch of 2: Conv2d out_channels * Hout * Wout *
             (in_channels / groups) * kH * kW using the output PyTorch computed; Linear in * out
    plus path, dynamic_hw_path, opset, input, output, torch.
Exit code: 0 written, 2 usage error, 3 the torch package is missing.
"""

import json
import os
import sys

try:
    import torch
    import torch.nn as nn
except Exception as e:  # fail loudly so the calling test cannot mistake this for a pass or skip
    sys.stderr.write("export_inspect_model.py: cannot import torch (%s); "
                     "install Debian's python3-torch\n" % e)
    sys.exit(3)

from torch_macs import torch_macs  # noqa: E402 (after the guarded torch import)

OPSET = 13
SIDE = 21
CLASSES = 5


def build():
    torch.manual_seed(0)
    model = nn.Sequential(
        nn.Conv2d(3, 8, 3, padding=1, bias=True),
        nn.BatchNorm2d(8),
        nn.ReLU(),
        nn.MaxPool2d(2),
        nn.Conv2d(8, 16, 3, stride=2, padding=1, bias=True),
        nn.BatchNorm2d(16),
        nn.ReLU(),
        nn.AdaptiveAvgPool2d(1),
        nn.Flatten(),
        nn.Linear(16, CLASSES),
    )
    with torch.no_grad():
        for m in model.modules():
            if isinstance(m, nn.BatchNorm2d):
                m.weight.uniform_(0.5, 1.5)
                m.bias.uniform_(-0.5, 0.5)
                m.running_mean.uniform_(-0.5, 0.5)
                m.running_var.uniform_(0.5, 1.5)
    return model.eval()


def export(model, example, path, dynamic_axes):
    with torch.no_grad():
        torch.onnx.export(
            model, example, path,
            input_names=["x"], output_names=["y"],
            dynamic_axes=dynamic_axes,
            opset_version=OPSET, do_constant_folding=False,
            training=torch.onnx.TrainingMode.PRESERVE, verbose=False)


def main(argv):
    if len(argv) != 2:
        sys.stderr.write(__doc__)
        return 2
    out_dir = argv[1]
    os.makedirs(out_dir, exist_ok=True)
    model = build()
    example = torch.randn(2, 3, SIDE, SIDE)
    path = os.path.abspath(os.path.join(out_dir, "cnn.onnx"))
    dynamic_hw_path = os.path.abspath(os.path.join(out_dir, "cnn-dynamic-hw.onnx"))
    export(model, example, path, {"x": {0: "B"}, "y": {0: "B"}})
    export(model, example, dynamic_hw_path, {"x": {0: "B", 2: "H", 3: "W"}, "y": {0: "B"}})

    params = sum(p.numel() for p in model.parameters())
    buffers = sum(m.running_mean.numel() + m.running_var.numel()
                  for m in model.modules() if isinstance(m, nn.BatchNorm2d))
    print(json.dumps({
        "path": path, "dynamic_hw_path": dynamic_hw_path, "opset": OPSET,
        "params": params, "buffers": buffers, "macs": torch_macs(model, example),
        "input": ["B", 3, SIDE, SIDE], "output": ["B", CLASSES], "torch": torch.__version__,
    }))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
