#!/usr/bin/python3
"""Runs our ONNX models in a second, independent engine: OpenCV's DNN module (Debian's python3-opencv).

Usage:
    python3 opencv_forward.py BATCH.jsonl

Each input line: {"id", "onnx": MODEL.onnx, "input": X.bin, "shape": [N, C, H, W], "logits": Y.bin}
where X.bin is the input and Y.bin ONNX Runtime's logits for it, both raw little-endian float32.
Each output line (stdout, same order): {"id", "shape": [...], "logit_error": e} or {"id", "error": "..."},
where e = max |opencv - onnxruntime| / max(1, max |onnxruntime|).
OpenCV reads the file exactly as written (cv2.dnn.readNetFromONNX), with its own importer and
its own CPU kernels; nothing here rewrites the model.
Exit code: 0 every line answered (errors included), 2 usage, 3 OpenCV or numpy is missing.
"""

import json
import sys

try:
    import numpy as np
    import cv2
except Exception as e:  # fail loudly so the calling test cannot mistake this for a pass or skip
    sys.stderr.write("opencv_forward.py: cannot import cv2/numpy (%s); install Debian's python3-opencv\n" % e)
    sys.exit(3)


def one_line(e):
    return " ".join(("%s: %s" % (type(e).__name__, e)).split())


def run(obj):
    net = cv2.dnn.readNetFromONNX(obj["onnx"])
    net.setPreferableBackend(cv2.dnn.DNN_BACKEND_OPENCV)
    net.setPreferableTarget(cv2.dnn.DNN_TARGET_CPU)
    shape = tuple(obj["shape"])
    x = np.fromfile(obj["input"], dtype="<f4").reshape(shape)
    net.setInput(x)
    y = net.forward()
    ort = np.fromfile(obj["logits"], dtype="<f4")
    if y.size != ort.size:
        raise ValueError("OpenCV gave %d logits (shape %s), ONNX Runtime %d" % (y.size, list(y.shape), ort.size))
    scale = max(1.0, float(np.abs(ort).max()))
    error = float(np.abs(y.reshape(-1).astype(np.float64) - ort.astype(np.float64)).max()) / scale
    return {"shape": [int(d) for d in y.shape], "logit_error": error}


def main(argv):
    if len(argv) != 2:
        sys.stderr.write("usage: opencv_forward.py BATCH.jsonl\n")
        return 2
    cv2.setNumThreads(1)  # the test machine's cores are shared by parallel test classes
    with open(argv[1], encoding="utf-8") as src:
        for line in src:
            if not line.strip():
                continue
            obj = json.loads(line)
            out = {"id": obj["id"]}
            try:
                out.update(run(obj))
            except Exception as e:  # cv2.error included: report it for this model, go on with the next
                out["error"] = one_line(e)
            sys.stdout.write(json.dumps(out) + "\n")
            sys.stdout.flush()
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
