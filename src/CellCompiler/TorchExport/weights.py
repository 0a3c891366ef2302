

# -- Building, counting and loading weights (the same in every file `cellc export-torch` writes) --


class WeightLoadError(Exception):
    """The ONNX file's initializers do not fit the network; the message lists every problem."""


def build():
    """The network with PyTorch's default initialisation, checked against cellc's figures."""
    model = Network()
    counts = (count_parameters(model), count_running_stats(model))
    if counts != (PARAMS, BUFFERS):
        raise RuntimeError("the generated network has %d parameters and %d running statistics, "
                           "cellc counted %d and %d" % (counts + (PARAMS, BUFFERS)))
    return model


def count_parameters(model):
    """Trainable values: what cellc reports as params."""
    return sum(p.numel() for p in model.parameters())


def count_running_stats(model):
    """BatchNorm running means and variances: what cellc reports as buffers."""
    return sum(b.numel() for name, b in model.named_buffers()
               if name.endswith((".running_mean", ".running_var")))


def module_path(node_name):
    """The module path of an ONNX node name: each segment loses its ":op", "/" becomes ".".

    stage1/cell0/e2:reef/e0:anemone/e1:dwconv3x3/conv -> stage1.cell0.e2.e0.e1.conv
    """
    return ".".join(segment.split(":", 1)[0] for segment in node_name.split("/"))


# A BatchNormalization's initializers by their PyTorch names (bias keeps its name).
_BATCH_NORM = {"scale": "weight", "mean": "running_mean", "var": "running_var"}
# A Clip's bounds: fixed settings of nn.ReLU6 (an nn.Hardtanh), not tensors of the state dict.
_CLIP_BOUNDS = {"min": "min_val", "max": "max_val"}
_PROBLEMS_SHOWN = 10  # of each kind


def load_onnx_weights(model, path, use_onnx=None):
    """Copies the initializers of the ONNX file at PATH into MODEL, by name.

    The file is the one `cellc compile` writes for the same genotype and skeleton (any seed).
    Initializer NODE.SUFFIX goes to module_path(NODE) + "." + SUFFIX, a BatchNormalization's
    scale, mean and var to weight, running_mean and running_var. Raises WeightLoadError,
    copying nothing, if any tensor is missing, extra or of another shape. use_onnx: True reads
    the file with the onnx package, False with the small reader below, None with onnx when it
    can be imported. Returns MODEL.
    """
    tensors = _read_initializers(path, use_onnx)
    modules = dict(model.named_modules())
    state = {key: value for key, value in model.state_dict().items()
             if not key.endswith("num_batches_tracked")}
    found, claimed = {}, set()
    missing, extra, misshaped, wrong_bounds = [], [], [], []
    for name, tensor in tensors:
        node, dot, suffix = name.rpartition(".")
        if not dot:
            extra.append("%s: extra; not a NODE.SUFFIX initializer name" % name)
            continue
        path_of_node = module_path(node)
        module = modules.get(path_of_node)
        if suffix in _CLIP_BOUNDS and isinstance(module, nn.Hardtanh):
            bound = float(getattr(module, _CLIP_BOUNDS[suffix]))
            if tensor.numel() != 1 or float(tensor.reshape(-1)[0]) != bound:
                wrong_bounds.append("%s: the bound is %s, but %s clips at %s"
                                    % (name, tensor.reshape(-1).tolist(), path_of_node, bound))
            continue
        if suffix in _BATCH_NORM:
            if not isinstance(module, nn.BatchNorm2d):
                extra.append("%s: extra; %s is not a batch normalization here" % (name, path_of_node))
                continue
            suffix = _BATCH_NORM[suffix]
        key = path_of_node + "." + suffix
        if key not in state:
            extra.append("%s: extra; the network has no %s" % (name, key))
        elif key in claimed:
            extra.append("%s: extra; a second tensor for %s" % (name, key))
        elif tuple(tensor.shape) != tuple(state[key].shape):
            misshaped.append("%s: shape %s, but %s has shape %s"
                             % (name, list(tensor.shape), key, list(state[key].shape)))
        else:
            found[key] = tensor
        claimed.add(key)
    missing = ["%s: missing; the file has no tensor for it" % key for key in state if key not in claimed]
    if missing or extra or misshaped or wrong_bounds:
        shown = []
        for items in (misshaped, extra, missing, wrong_bounds):
            shown += items[:_PROBLEMS_SHOWN]
            if len(items) > _PROBLEMS_SHOWN:
                shown.append("... and %d more like that" % (len(items) - _PROBLEMS_SHOWN))
        raise WeightLoadError("%s: the weights do not fit this network (%d of another shape, %d extra, %d missing, "
                              "%d wrong bounds); nothing was copied:\n  %s"
                              % (path, len(misshaped), len(extra), len(missing), len(wrong_bounds), "\n  ".join(shown)))
    with torch.no_grad():
        for key, tensor in found.items():
            state[key].copy_(tensor)
    return model


def _read_initializers(path, use_onnx):
    """[(name, float32 tensor)] of every initializer of the model file at PATH."""
    if use_onnx is None:
        try:
            import onnx  # noqa: F401
            use_onnx = True
        except ImportError:
            use_onnx = False
    return _read_with_onnx(path) if use_onnx else _read_with_builtin_reader(path)


def _read_with_onnx(path):
    import onnx
    from onnx import numpy_helper
    model = onnx.load(path)
    result = []
    for initializer in model.graph.initializer:
        if initializer.data_type != onnx.TensorProto.FLOAT:
            raise WeightLoadError("%s: %s is not float32" % (path, initializer.name))
        result.append((initializer.name, torch.from_numpy(numpy_helper.to_array(initializer).copy())))
    return result


# A reader of just what load_onnx_weights needs, for machines without the onnx package:
# ModelProto.graph (field 7) -> GraphProto.initializer (field 5) -> TensorProto dims (1),
# data_type (2), float_data (4), name (8), raw_data (9), data_location (14).
_FLOAT = 1
_EXTERNAL = 1


def _read_with_builtin_reader(path):
    if sys.byteorder != "little":
        raise WeightLoadError("the built-in reader needs a little-endian machine; install the onnx package")
    with open(path, "rb") as f:
        data = memoryview(f.read())
    try:
        graph = None
        for field, wire, value in _fields(data, 0, len(data)):
            if field == 7 and wire == 2:
                graph = value
        if graph is None:
            raise WeightLoadError("%s: no graph; not an ONNX model" % path)
        return [_tensor(data, start, end, path)
                for field, wire, (start, end) in _fields(data, *graph) if field == 5 and wire == 2]
    except IndexError:
        raise WeightLoadError("%s: the file ends early; not a complete ONNX model" % path) from None


def _varint(data, pos):
    result, shift = 0, 0
    while True:
        byte = data[pos]
        pos += 1
        result |= (byte & 0x7F) << shift
        if byte < 0x80:
            return result, pos
        shift += 7


def _fields(data, start, end):
    """(field number, wire type, value) of each field of the message in data[start:end];
    value is an int (varint), (start, end) (length-delimited) or the raw bytes (fixed32/64)."""
    pos = start
    while pos < end:
        key, pos = _varint(data, pos)
        field, wire = key >> 3, key & 7
        if wire == 0:
            value, pos = _varint(data, pos)
        elif wire == 2:
            length, pos = _varint(data, pos)
            value, pos = (pos, pos + length), pos + length
        elif wire == 5:
            value, pos = data[pos:pos + 4], pos + 4
        elif wire == 1:
            value, pos = data[pos:pos + 8], pos + 8
        else:
            raise WeightLoadError("unsupported protobuf wire type %d" % wire)
        if pos > end:
            raise IndexError(pos)
        yield field, wire, value


def _tensor(data, start, end, path):
    dims, data_type, name, raw, floats = [], 0, "", None, bytearray()
    for field, wire, value in _fields(data, start, end):
        if field == 1 and wire == 0:
            dims.append(value)
        elif field == 1 and wire == 2:
            pos = value[0]
            while pos < value[1]:
                dim, pos = _varint(data, pos)
                dims.append(dim)
        elif field == 2 and wire == 0:
            data_type = value
        elif field == 4 and wire == 2:
            floats += data[value[0]:value[1]]
        elif field == 4 and wire == 5:
            floats += value
        elif field == 8 and wire == 2:
            name = bytes(data[value[0]:value[1]]).decode("utf-8")
        elif field == 9 and wire == 2:
            raw = data[value[0]:value[1]]
        elif field == 14 and wire == 0 and value == _EXTERNAL:
            raise WeightLoadError("%s: %s is stored in an external file" % (path, name))
    if data_type != _FLOAT:
        raise WeightLoadError("%s: %s is not float32" % (path, name))
    values = bytearray(raw) if raw is not None else floats
    count = 1
    for dim in dims:
        count *= dim
    if len(values) != 4 * count:
        raise WeightLoadError("%s: %s holds %d bytes for shape %s" % (path, name, len(values), dims))
    if count == 0:
        return name, torch.zeros(dims)
    return name, torch.frombuffer(values, dtype=torch.float32).reshape(dims)


def main(argv):
    """python3 THIS_FILE [MODEL.onnx]: the network's size; with a model, load it and run once."""
    model = build()
    print("%s: %d parameters, %d running statistics"
          % (GENOTYPE_NAME, count_parameters(model), count_running_stats(model)))
    if len(argv) > 1:
        load_onnx_weights(model, argv[1])
        model.eval()
        with torch.no_grad():
            logits = model(torch.zeros((1,) + INPUT_SHAPE))
        print("loaded %s; the logits of a blank image have shape %s" % (argv[1], list(logits.shape)))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
