namespace CellCompiler.Onnx;

/// <summary>Opset range we emit and the IR version each opset needs (from the ONNX versioning table).</summary>
public static class OnnxVersions
{
    public const int DefaultOpset = 17;
    public const int MinOpset = 13;
    public const int MaxOpset = 21;
    public const long BaseIrVersion = 8;

    /// <summary>IR 8 by default; opsets 19 and 20 need IR 9, opset 21 needs IR 10.</summary>
    public static long IrVersionFor(int opset) => opset switch
    {
        >= 21 => 10,
        >= 19 => 9,
        _ => BaseIrVersion,
    };

    public const string ProducerName = "cellc";
    /// <summary>This build's version, the one `cellc --version` prints.</summary>
    public static string ProducerVersion => BuildInfo.Version;
}
