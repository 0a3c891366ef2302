using Microsoft.ML.OnnxRuntime;

namespace CellCompiler.Runtime;

/// <summary>
/// What ONNX Runtime may print itself: fatal errors only. Its log goes to standard error as it is
/// (colour codes, a model's node and tensor names unescaped, before our own message) and repeats
/// what its exception says, which reaches the user once, escaped, as the command's message.
/// </summary>
internal static class RuntimeLog
{
    public const OrtLoggingLevel Level = OrtLoggingLevel.ORT_LOGGING_LEVEL_FATAL;
}
