"""MACs per sample of a torch.nn model, by forward hooks on the shapes PyTorch itself computes.

Conv2d: out_channels * Hout * Wout * (in_channels / groups) * kH * kW per sample (the usual count:
one multiply-add per weight per output position); Linear: in_features * out_features. Other layers
(pools, activations, normalisation) count no MACs, as in this project's figures.
Shared by the test-side exporters (export_inspect_model.py, torchvision_export.py).
"""

import torch
import torch.nn as nn


def torch_macs(model, example):
    total = [0]
    batch = example.shape[0]

    def conv_hook(m, inputs, output):
        kh, kw = m.kernel_size
        total[0] += (output.numel() // batch) * (m.in_channels // m.groups) * kh * kw

    def linear_hook(m, inputs, output):
        total[0] += m.in_features * m.out_features

    handles = []
    for m in model.modules():
        if isinstance(m, nn.Conv2d):
            handles.append(m.register_forward_hook(conv_hook))
        elif isinstance(m, nn.Linear):
            handles.append(m.register_forward_hook(linear_hook))
    with torch.no_grad():
        model(example)
    for h in handles:
        h.remove()
    return total[0]
