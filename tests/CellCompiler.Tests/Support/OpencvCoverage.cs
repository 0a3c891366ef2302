using System.Text.Json;

namespace CellCompiler.Tests.Support;

/// <summary>
/// Which of our models OpenCV 4.6's DNN module (Debian's python3-opencv) can read, decided from the
/// genotype alone. Two lowerings of contract 3.1 are valid ONNX (the ONNX checker and ONNX Runtime
/// accept them) but beyond that OpenCV version, found by running it (OpencvKnownLimitsTests keeps
/// both findings true):
/// - relu6: Clip with min and max as inputs (the form of opset 11 and later); OpenCV 4.6's importer
///   asserts a single input, i.e. the attribute form of opsets before 11.
/// - squeeze-excitation (mbconv with se &gt; 0): Mul of [N, E, H, W] by [N, E, 1, 1]; OpenCV 4.6 cannot
///   broadcast it while the batch dimension is symbolic (it can when the batch is a fixed number).
/// Every other kind, parameter and activation runs in OpenCV and is compared there.
/// </summary>
public static class OpencvCoverage
{
    public const string Relu6Reason = "relu6 (OpenCV 4.6 reads Clip only with min/max attributes, opset < 11)";
    public const string SqueezeExcitationReason = "squeeze-excitation (OpenCV 4.6 cannot broadcast Mul over a symbolic batch)";

    /// <summary>Why OpenCV 4.6 cannot run the genotype's network, or null when it can.</summary>
    public static string? Unsupported(string genotypeJson)
    {
        using var document = JsonDocument.Parse(genotypeJson);
        var root = document.RootElement;
        if (!root.TryGetProperty("primitives", out var primitives)) return null;
        var used = new HashSet<string>(StringComparer.Ordinal);
        foreach (var motif in root.GetProperty("levels")[0].GetProperty("motifs").EnumerateObject())
            foreach (var edge in motif.Value.GetProperty("edges").EnumerateArray())
                used.Add(edge[2].GetString()!);
        foreach (var declaration in primitives.EnumerateObject().Where(p => used.Contains(p.Name)))
        {
            var spec = declaration.Value;
            if (spec.TryGetProperty("act", out var act) && act.GetString() == "relu6") return Relu6Reason;
            if (spec.GetProperty("kind").GetString() == "mbconv" && spec.TryGetProperty("se", out var se) && se.GetDouble() > 0)
                return SqueezeExcitationReason;
        }
        return null;
    }
}
