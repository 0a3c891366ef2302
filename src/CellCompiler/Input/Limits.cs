namespace CellCompiler.Input;

/// <summary>Limits that guard against hostile or mistaken input; checked before any large allocation.</summary>
public static class Limits
{
    public const int MaxJsonBytes = 1 << 20;
    public const int MaxLevels = 8;
    public const int MinNodes = 2;
    public const int MaxNodes = 64;
    public const int MaxMotifsPerLevel = 256;
    public const long MaxExpandedPrimitiveOps = 100_000;

    // Skeleton limits are the project's own choice: generous for real networks, small enough
    // that a typo (channels 640000) fails fast instead of exhausting memory.
    public const int MaxStages = 16;
    public const int MaxCellsPerStage = 64;
    public const int MaxChannels = 16_384;
    public const int MaxInputSide = 8_192;
    public const int MaxInputChannels = 1_024;
    public const int MaxClasses = 1_000_000;

    /// <summary>A byte limit for people: "1 MiB", "2 GiB", else the exact count.</summary>
    public static string Describe(long bytes) => bytes switch
    {
        _ when bytes >= 1L << 30 && bytes % (1L << 30) == 0 => $"{bytes >> 30} GiB",
        _ when bytes >= 1L << 20 && bytes % (1L << 20) == 0 => $"{bytes >> 20} MiB",
        _ => $"{bytes:N0} bytes",
    };

    /// <summary>A protobuf message cannot exceed 2 GiB, so neither can a single-file ONNX model.</summary>
    public const long MaxModelBytes = int.MaxValue;
}
