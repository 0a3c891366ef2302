#!/usr/bin/python3
"""Checks .onnx files with the ONNX reference checker (Debian's python3-onnx), as a test oracle.

Usage:
    python3 onnx_check.py MODEL.onnx [MODEL2.onnx ...]

For each path, one JSON line on stdout: {"path", "ok": true} or {"path", "ok": false, "error"}.
Exit code: 0 all ok, 1 some model failed, 2 usage error, 3 the onnx package is missing.

Per model it runs:
  1. the checker on the path (path form, so models over 2 GB with external data work);
  2. full shape inference on the path (check_type, strict_mode), i.e. what
     check_model(path, full_check=True) does, but written to a temporary file: in onnx 1.12
     check_model(path, full_check=True) overwrites the model file with the inferred model,
     which would alter the file under test.
(Running onnx.shape_inference.infer_shapes on the loaded model as well would repeat step 2's work
on a second copy of the weights; the big models made that the checker's largest cost.)
"""

import json
import os
import sys
import tempfile

try:
    import onnx
    import onnx.checker
    import onnx.shape_inference
except Exception as e:  # fail loudly so the calling test cannot mistake this for a pass or skip
    sys.stderr.write("onnx_check.py: cannot import the onnx package (%s); "
                     "install Debian's python3-onnx\n" % e)
    sys.exit(3)


def one_line(e):
    return " ".join(("%s: %s" % (type(e).__name__, e)).split())


def check(path):
    if not os.path.isfile(path):
        raise FileNotFoundError("no such file: %s" % path)
    onnx.checker.check_model(path)
    with tempfile.TemporaryDirectory(prefix="onnx_check_") as tmp:
        onnx.shape_inference.infer_shapes_path(
            path, os.path.join(tmp, "inferred.onnx"), check_type=True, strict_mode=True)


def main(argv):
    if len(argv) < 2:
        sys.stderr.write("usage: onnx_check.py MODEL.onnx [MODEL2.onnx ...]\n")
        return 2
    all_ok = True
    for path in argv[1:]:
        try:
            check(path)
            out = {"path": path, "ok": True}
        except Exception as e:
            all_ok = False
            out = {"path": path, "ok": False, "error": one_line(e)}
        sys.stdout.write(json.dumps(out) + "\n")
        sys.stdout.flush()
    return 0 if all_ok else 1


if __name__ == "__main__":
    sys.exit(main(sys.argv))
