#!/usr/bin/python3
"""Reads what a model file says about its own making, with the ONNX reference library (Debian's
python3-onnx), for the tests of the metadata `cellc compile` writes so that `cellc export-torch`
and a recompile can start from the model file alone.

Usage:
    python3 torch_export_metadata.py MODEL.onnx

Prints one JSON line: metadata_props (key -> value, in file order), opset (the default domain's
version from opset_import), producer_name, producer_version, and checker ("ok" when
onnx.checker.check_model accepts the file, else its message).
Exit code: 0 read, 2 usage error, 3 the onnx package is missing.
"""

import json
import sys

try:
    import onnx
except Exception as e:  # fail loudly so the calling test cannot mistake this for a pass or skip
    sys.stderr.write("torch_export_metadata.py: cannot import onnx (%s); install Debian's python3-onnx\n" % e)
    sys.exit(3)


def main(argv):
    if len(argv) != 2:
        sys.stderr.write(__doc__)
        return 2
    model = onnx.load(argv[1])
    try:
        onnx.checker.check_model(model)
        checker = "ok"
    except Exception as e:
        checker = str(e)
    print(json.dumps({
        "metadata_props": {p.key: p.value for p in model.metadata_props},
        "keys": [p.key for p in model.metadata_props],
        "opset": next(o.version for o in model.opset_import if o.domain in ("", "ai.onnx")),
        "producer_name": model.producer_name,
        "producer_version": model.producer_version,
        "checker": checker,
    }))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
