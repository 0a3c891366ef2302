using CellCompiler.Input;
using CellCompiler.Io;
using CellCompiler.OnnxFormat;
using Google.Protobuf;

namespace CellCompiler.Inspection;

/// <summary>
/// Reads an ONNX model from a file, a pipe or a device without trusting it: the protobuf is
/// parsed while it streams in, so reading stops at the 2 GiB limit (or at the first byte that is
/// no protobuf: /dev/zero fails at once) instead of loading the whole input first; unknown fields
/// are dropped rather than kept; nesting deeper than the protobuf library's recursion limit (100)
/// is refused. Every failure is an <see cref="InputException"/> naming the source.
/// Why not a reader that loads the bytes first (bounded, then parsed): a model may be up to 2 GiB,
/// so an endless pipe would cost 2 GiB and more before being refused; parsing while reading
/// stopped `&lt;(yes ' ')` at the limit with a 32 MiB peak (README, "Hostile model files").
/// </summary>
internal static class ModelFileReader
{
    /// <summary>Unknown fields (parts of the ONNX schema we do not read, or garbage) are skipped, never held in memory.</summary>
    private static readonly MessageParser<ModelProto> Parser = ModelProto.Parser.WithDiscardUnknownFields(true);

    public static (ModelProto Model, long Bytes) Read(string path) => Read(path, Limits.MaxModelBytes);

    /// <summary>Reads with a size limit of <paramref name="limit"/> bytes (the tests use a small one to show the bound).</summary>
    internal static (ModelProto Model, long Bytes) Read(string path, long limit)
    {
        var (model, length, _) = ReadCore(path, limit, keepBytes: false);
        return (model, length);
    }

    /// <summary>
    /// The model and its bytes exactly as read, for ONNX Runtime, which must get the original: parsing
    /// drops what our schema does not declare. A regular file is read again once it has parsed as a
    /// model; a pipe's or a device's bytes go to a <see cref="SpoolFile"/> while they are parsed, so
    /// that no input costs memory before it is known to be a model.
    /// </summary>
    public static (ModelProto Model, byte[] Bytes) ReadWithBytes(string path) => ReadWithBytes(path, Limits.MaxModelBytes);

    internal static (ModelProto Model, byte[] Bytes) ReadWithBytes(string path, long limit)
    {
        // One array holds the bytes: a few bytes under 2 GiB at most.
        var (model, _, bytes) = ReadCore(path, Math.Min(limit, Array.MaxLength), keepBytes: true);
        return (model, bytes!);
    }

    private static (ModelProto Model, long Bytes, byte[]? Kept) ReadCore(string path, long limit, bool keepBytes)
    {
        if (Directory.Exists(path)) throw new InputException(path, "", "is a folder, not an ONNX model file");
        FileStream file;
        try
        {
            file = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read, bufferSize: 1 << 16, FileOptions.SequentialScan);
        }
        catch (Exception e) when (e is FileNotFoundException or DirectoryNotFoundException)
        {
            throw new InputException(path, "", "file not found");
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(path, "", $"cannot read the file: {e.Message}");
        }

        using (file)
        {
            // A regular file over the limit is refused before reading a byte; pipes and devices are bounded while reading.
            if (file.CanSeek && file.Length > limit) throw TooLarge(path, file.Length, limit);
            // A regular file is read again once parsed; a device such as /dev/zero can seek but states no length: spooled like a pipe.
            var rereadable = file.CanSeek && file.Length > 0;
            using var copy = keepBytes && !rereadable ? Spool(path) : null;
            var bounded = new BoundedStream(file, limit, copy);
            ModelProto model;
            try { model = Parser.ParseFrom(bounded); }
            catch (InvalidProtocolBufferException e) { throw NotProtobuf(path, e, bounded.Head, bounded.Position); }
            catch (LimitReachedException) { throw TooLarge(path, null, limit); }
            catch (CopyFailedException e)
            {
                throw new InputException(path, "", $"cannot keep a copy of it in the temporary folder while reading: {e.InnerException!.Message}");
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                throw new InputException(path, "", $"cannot read the file: {e.Message}");
            }
            Validate(model, path, bounded.Head, bounded.Position);
            return (model, bounded.Position, keepBytes ? ReadBack(rereadable ? file : copy!, bounded.Position, path) : null);
        }
    }

    private static FileStream Spool(string path)
    {
        try { return SpoolFile.Create(); }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(path, "", $"cannot keep a copy of it in the temporary folder while reading: {e.Message}");
        }
    }

    /// <summary>The <paramref name="length"/> bytes that parsed as the model, from the start of the file or of its spooled copy.</summary>
    private static byte[] ReadBack(Stream stream, long length, string path)
    {
        try
        {
            var bytes = GC.AllocateUninitializedArray<byte>((int)length);
            stream.Position = 0;
            stream.ReadExactly(bytes);
            return bytes;
        }
        catch (EndOfStreamException) { throw new InputException(path, "", "the file became shorter while it was read"); }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(path, "", $"cannot read the file again: {e.Message}");
        }
    }

    /// <summary>Parses a model held in memory, with the same checks as a file.</summary>
    public static ModelProto Parse(byte[] bytes, string source)
    {
        ModelProto model;
        try { model = Parser.ParseFrom(bytes); }
        catch (InvalidProtocolBufferException e) { throw NotProtobuf(source, e, bytes.AsSpan(0, Math.Min(bytes.Length, 64)).ToArray(), bytes.LongLength); }
        Validate(model, source, bytes.AsSpan(0, Math.Min(bytes.Length, 64)).ToArray(), bytes.LongLength);
        return model;
    }

    private static InputException TooLarge(string path, long? length, long limit) => new(path, "",
        (length is { } n ? $"the file is {n:N0} bytes" : $"the input goes on past {limit:N0} bytes, where reading stopped") +
        (limit >= Array.MaxLength
            ? "; models over 2 GiB are not supported (a single protobuf message holds at most 2 GiB; larger models keep their weights in external data files)"
            : $"; the limit is {limit:N0} bytes"));

    private static InputException NotProtobuf(string source, InvalidProtocolBufferException e, byte[] head, long length) =>
        new(source, "", length == 0
            ? "the file is empty, not an ONNX model"
            : $"not an ONNX model: the file is not a valid ONNX protobuf ({FirstSentence(e.Message)}){TextHint(head)}");

    /// <summary>The protobuf library's first sentence says what is wrong; the rest is advice for programmers.</summary>
    private static string FirstSentence(string message)
    {
        var end = message.IndexOf(". ", StringComparison.Ordinal);
        return (end > 0 ? message[..end] : message).TrimEnd('.');
    }

    /// <summary>Arbitrary bytes can happen to parse as a protobuf message: require what every ONNX model has.</summary>
    private static void Validate(ModelProto model, string source, byte[] head, long length)
    {
        if (length == 0) throw new InputException(source, "", "the file is empty, not an ONNX model");
        var missing = model.Graph is null ? "graph" : model.IrVersion <= 0 ? "ir_version" : model.OpsetImport.Count == 0 ? "opset_import" : null;
        if (missing is not null)
            throw new InputException(source, "", $"not an ONNX model: no {missing} in the file{TextHint(head)}");
    }

    private static string TextHint(byte[] head)
    {
        foreach (var b in head)
        {
            if (char.IsWhiteSpace((char)b)) continue;
            return b is (byte)'{' or (byte)'[' ? " (it looks like JSON text; ONNX models are binary protobuf files)" : "";
        }
        return "";
    }

    private sealed class LimitReachedException : Exception;

    /// <summary>Writing the copy failed (a full disk): told apart from a failure to read the input.</summary>
    private sealed class CopyFailedException(Exception inner) : Exception(inner.Message, inner);

    /// <summary>
    /// A read-only stream that counts what it passes on, keeps the first bytes, and stops past a limit;
    /// with a <paramref name="copy"/>, everything it passes on is also written there.
    /// </summary>
    private sealed class BoundedStream(Stream inner, long limit, Stream? copy) : Stream
    {
        private readonly byte[] _head = new byte[64];
        private long _position;

        /// <summary>The first bytes read (up to 64), for a hint about what the file is.</summary>
        public byte[] Head => _head.AsSpan(0, (int)Math.Min(_position, _head.Length)).ToArray();

        public override int Read(byte[] buffer, int offset, int count) => Read(buffer.AsSpan(offset, count));

        public override int Read(Span<byte> buffer)
        {
            // Ask for one byte past the limit so that reaching it is told apart from ending exactly there.
            var allowed = (int)Math.Min(buffer.Length, limit + 1 - _position);
            if (allowed <= 0) throw new LimitReachedException();
            var read = inner.Read(buffer[..allowed]);
            if (_position < _head.Length)
                buffer[..Math.Min(read, (int)(_head.Length - _position))].CopyTo(_head.AsSpan((int)_position));
            _position += read;
            if (_position > limit) throw new LimitReachedException();
            try { copy?.Write(buffer[..read]); }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException) { throw new CopyFailedException(e); }
            return read;
        }

        public override bool CanRead => true;
        public override bool CanSeek => false;
        public override bool CanWrite => false;
        public override long Length => throw new NotSupportedException();
        public override long Position { get => _position; set => throw new NotSupportedException(); }
        public override void Flush() { }
        public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();
        public override void SetLength(long value) => throw new NotSupportedException();
        public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();
    }
}
