#!/usr/bin/python3
"""Reads every attribute of every node with the ONNX reference library (Debian's python3-onnx) and
reports the scalar attributes that carry a type but no value.

The ONNX schema (onnx.proto) is proto2: AttributeProto's f, i and s are optional fields with
presence, and an INT attribute without its i is malformed to readers that check presence (OpenCV's
DNN importer refuses it: "unsupported attribute format"). A proto3 writer leaves a zero i out unless
the field is declared optional, so a count_include_pad of 0 would silently lose its value.

Usage:
    python3 attribute_values.py MODEL.onnx [MODEL2.onnx ...]

For each path, one JSON line on stdout:
    {"path", "attributes": number read, "missing": ["node / attribute (TYPE)", ...]}
or {"path", "error": "..."} when the file cannot be read.
Exit code: 0 every file read (missing values are reported, not an exit code), 2 usage, 3 onnx missing.
"""

import json
import sys

try:
    import onnx
    from onnx import AttributeProto
except Exception as e:  # fail loudly so the calling test cannot mistake this for a pass or skip
    sys.stderr.write("attribute_values.py: cannot import the onnx package (%s); install Debian's python3-onnx\n" % e)
    sys.exit(3)

# The attribute types whose value is a single optional field, and that field's name.
SCALAR_FIELD = {AttributeProto.FLOAT: "f", AttributeProto.INT: "i", AttributeProto.STRING: "s",
                AttributeProto.TENSOR: "t", AttributeProto.GRAPH: "g"}
TYPE_NAME = {v: k for k, v in AttributeProto.AttributeType.items()}


def graph_attributes(graph):
    for node in graph.node:
        for attribute in node.attribute:
            yield node, attribute
            if attribute.HasField("g"):
                yield from graph_attributes(attribute.g)
            for sub in attribute.graphs:
                yield from graph_attributes(sub)


def check(path):
    model = onnx.load(path, load_external_data=False)
    count = 0
    missing = []
    for node, attribute in graph_attributes(model.graph):
        count += 1
        kind = attribute.type
        label = "%s / %s (%s)" % (node.name, attribute.name, TYPE_NAME.get(kind, kind))
        if kind == AttributeProto.UNDEFINED:
            missing.append(label + ": no type")
        elif kind in SCALAR_FIELD and not attribute.HasField(SCALAR_FIELD[kind]):
            missing.append(label)
    return {"attributes": count, "missing": missing}


def main(argv):
    if len(argv) < 2:
        sys.stderr.write("usage: attribute_values.py MODEL.onnx [MODEL2.onnx ...]\n")
        return 2
    for path in argv[1:]:
        out = {"path": path}
        try:
            out.update(check(path))
        except Exception as e:
            out["error"] = " ".join(("%s: %s" % (type(e).__name__, e)).split())
        sys.stdout.write(json.dumps(out) + "\n")
        sys.stdout.flush()
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
