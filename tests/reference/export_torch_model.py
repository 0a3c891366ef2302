#!/usr/bin/python3
"""Exports a small PyTorch CNN to ONNX with torch.onnx.export (Debian's python3-torch), as a
model this tool did not make, for the `cellc bench` tests.

Usage:
    python3 export_torch_model.py OUT.onnx

The network: Conv2d(3, 8, 3, padding=1) -> ReLU -> AdaptiveAvgPool2d(1) -> Flatten -> Linear(8, 5).
Input "x" of shape [B, 3, 16, 16] with a dynamic batch axis B; output "y" of shape [B, 5].
Opset 13. Prints one JSON line on stdout: {"path", "opset", "input", "output", "torch"}.
Exit code: 0 written, 2 usage error, 3 the torch package is missing.
"""

import json
import os
import sys

try:
    import torch
    import torch.nn as nn
except Exception as e:  # fail loudly so the calling test cannot mistake this for a pass or skip
    sys.stderr.write("export_torch_model.py: cannot import torch (%s); "
                     "install Debian's python3-torch\n" % e)
    sys.exit(3)

OPSET = 13
CLASSES = 5


def main(argv):
    if len(argv) != 2:
        sys.stderr.write(__doc__)
        return 2
    out = argv[1]
    torch.manual_seed(0)
    model = nn.Sequential(
        nn.Conv2d(3, 8, 3, padding=1),
        nn.ReLU(),
        nn.AdaptiveAvgPool2d(1),
        nn.Flatten(),
        nn.Linear(8, CLASSES),
    ).eval()
    example = torch.randn(2, 3, 16, 16)
    with torch.no_grad():
        torch.onnx.export(
            model, example, out,
            input_names=["x"], output_names=["y"],
            dynamic_axes={"x": {0: "B"}, "y": {0: "B"}},
            opset_version=OPSET, do_constant_folding=True, verbose=False)
    print(json.dumps({"path": os.path.abspath(out), "opset": OPSET,
                      "input": ["B", 3, 16, 16], "output": ["B", CLASSES],
                      "torch": torch.__version__}))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
