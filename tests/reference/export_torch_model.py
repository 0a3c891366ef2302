#!/usr/bin/python3
"""Exports a small PyTorch CNN to ONNX with torch.onnx.export (Debian's python3-torch), as a
model this tool did not make, for the `cellc bench` tests.

Usage:
    python3 export_torch_model.py OUT.onnx [--static]

The network: Conv2d(3, 8, 3, padding=1) -> ReLU -> AdaptiveAvgPool2d(1) -> Flatten -> Linear(8, 5).
Input "x" of shape [B, 3, 16, 16] with a dynamic batch axis B; output "y" of shape [B, 5].
With --static, no dynamic axis: input [1, 3, 16, 16], output [1, 5] (a fixed batch of 1).
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
    if len(argv) not in (2, 3) or (len(argv) == 3 and argv[2] != "--static"):
        sys.stderr.write(__doc__)
        return 2
    out = argv[1]
    static = len(argv) == 3
    torch.manual_seed(0)
    model = nn.Sequential(
        nn.Conv2d(3, 8, 3, padding=1),
        nn.ReLU(),
        nn.AdaptiveAvgPool2d(1),
        nn.Flatten(),
        nn.Linear(8, CLASSES),
    ).eval()
    example = torch.randn(1 if static else 2, 3, 16, 16)
    with torch.no_grad():
        torch.onnx.export(
            model, example, out,
            input_names=["x"], output_names=["y"],
            dynamic_axes=None if static else {"x": {0: "B"}, "y": {0: "B"}},
            opset_version=OPSET, do_constant_folding=True, verbose=False)
    batch = 1 if static else "B"
    print(json.dumps({"path": os.path.abspath(out), "opset": OPSET,
                      "input": [batch, 3, 16, 16], "output": [batch, CLASSES],
                      "torch": torch.__version__}))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
