using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.OnnxFormat;
using CellCompiler.Tests.Support;
using Google.Protobuf;

namespace CellCompiler.Tests;

/// <summary>
/// Every attribute carries its value (issue 8, section 1). The ONNX schema is proto2, where a scalar
/// that is set is written even when it is zero; readers may rely on that (OpenCV's DNN importer refuses
/// an INT attribute without its value). tests/reference/attribute_values.py reads every attribute of
/// every node with the ONNX reference library (Debian's python3-onnx 1.12) and lists each INT, FLOAT
/// or STRING attribute whose value field is absent (HasField).
/// </summary>
public sealed class AttributeValueTests
{
    private static readonly int[] Opsets = [13, 17];

    private static IReadOnlyList<System.Text.Json.JsonElement> ReadAttributes(TempFolder folder, IEnumerable<(string Name, byte[] Bytes)> models)
    {
        var paths = new List<string>();
        foreach (var (name, bytes) in models)
        {
            var path = folder.File(name + ".onnx");
            File.WriteAllBytes(path, bytes);
            paths.Add(path);
        }
        var reports = PythonReference.RunJsonLines("attribute_values.py", paths.ToArray());
        Assert.Equal(paths.Count, reports.Count);
        return reports;
    }

    private static void AssertEveryValuePresent(IReadOnlyList<System.Text.Json.JsonElement> reports)
    {
        foreach (var report in reports)
        {
            Assert.False(report.TryGetProperty("error", out var error), $"{report.GetProperty("path")}: {error}");
            Assert.True(report.GetProperty("attributes").GetInt32() > 0, $"{report.GetProperty("path")}: no attributes read");
            Assert.True(report.GetProperty("missing").GetArrayLength() == 0,
                $"{report.GetProperty("path")}: attributes without their value: {report.GetProperty("missing")}");
        }
    }

    private static IEnumerable<(string Name, byte[] Bytes)> CompileAll(string label, string json, Skeleton skeleton)
    {
        var genotype = GenotypeReader.Parse(json, label, label);
        foreach (var merge in new[] { MergeMode.Concat, MergeMode.Sum })
            foreach (var opset in Opsets)
            {
                CompiledModel model;
                try { model = Compiler.Compile(genotype, skeleton with { Merge = merge }, new CompileOptions(0, opset)); }
                catch (DeadCellException) { continue; }
                yield return ($"{label}-{Skeleton.MergeName(merge)}{opset}", model.OnnxBytes);
            }
    }

    [Fact]
    public void FixturesAndGeneratedModelsCarryEveryAttributeValue()
    {
        using var folder = new TempFolder();
        var models = new List<(string, byte[])>();
        foreach (var file in ReferenceFixtureTests.GenotypeFixtures())
            models.AddRange(CompileAll(Path.GetFileNameWithoutExtension(file), File.ReadAllText(file), SkeletonPresets.All["proxy"]));
        // The fixture skeleton uses the conv3x3 reduction and a stem of its own.
        models.AddRange(CompileAll("h3-skeleton-file", File.ReadAllText(RepoPaths.Fixture("tidepool-h3.json")),
            SkeletonReader.Resolve(RepoPaths.Fixture("tidepool-skeleton.json"))));
        foreach (var seed in Enumerable.Range(4000, 40))
            models.AddRange(CompileAll($"generated-{seed}", RandomGenotypes.Json(seed, 3, 5), SkeletonPresets.All["proxy"]));
        Assert.True(models.Count >= 120, $"{models.Count} models");
        var reports = ReadAttributes(folder, models);
        AssertEveryValuePresent(reports);
    }

    /// <summary>Every kind and parameter of contract 3.1 (Conv dilations, HardSigmoid alpha and beta, ...).</summary>
    [Fact]
    public void DeclaredPrimitivesCarryEveryAttributeValue()
    {
        using var folder = new TempFolder();
        var models = new List<(string, byte[])>();
        foreach (var c in ReferenceDeclaredVocabularyTests.Cases().Where(c => c.Id.EndsWith("concat13", StringComparison.Ordinal)))
            models.AddRange(CompileAll(c.Id, c.GenotypeJson, SkeletonPresets.All["proxy"]));
        AssertEveryValuePresent(ReadAttributes(folder, models));
    }

    /// <summary>The check can fail: a count_include_pad whose value is cleared is reported, by node and attribute.</summary>
    [Fact]
    public void AnIntAttributeWithoutItsValueIsReported()
    {
        var genotype = GenotypeReader.ReadFile(RepoPaths.Fixture("tidepool-flat11.json"));
        var proto = ModelProto.Parser.ParseFrom(Compiler.Compile(genotype, SkeletonPresets.All["proxy"]).OnnxBytes);
        var pool = proto.Graph.Node.First(n => n.OpType == "AveragePool");
        var attribute = pool.Attribute.Single(a => a.Name == "count_include_pad");
        Assert.True(attribute.HasI);
        attribute.ClearI(); // what a proto3 writer without field presence does with a 0
        using var folder = new TempFolder();
        var report = ReadAttributes(folder, [("cleared", proto.ToByteArray())]).Single();
        Assert.Equal([$"{pool.Name} / count_include_pad (INT)"], report.GetProperty("missing").EnumerateArray().Select(e => e.GetString()));
    }

    /// <summary>
    /// Our own schema keeps presence: a zero INT and a zero FLOAT are written with their value. The
    /// expected bytes follow the protobuf wire format (protobuf.dev, "Encoding"): fields in number
    /// order, tag = field number * 8 + wire type; name is field 1 (length-delimited, 0x0A), f field 2
    /// (32-bit, 0x15), i field 3 (varint, 0x18), type field 20 (varint, tag 160 = 0xA0 0x01).
    /// </summary>
    [Fact]
    public void ZeroScalarsAreWrittenWithTheirValue()
    {
        var zeroInt = new AttributeProto { Name = "count_include_pad", Type = AttributeProto.Types.AttributeType.Int, I = 0 };
        byte[] intBytes = [0x0A, 17, .. "count_include_pad"u8, 0x18, 0x00, 0xA0, 0x01, 0x02];
        Assert.Equal(intBytes, zeroInt.ToByteArray());
        Assert.True(AttributeProto.Parser.ParseFrom(intBytes).HasI);

        var zeroFloat = new AttributeProto { Name = "beta", Type = AttributeProto.Types.AttributeType.Float, F = 0f };
        byte[] floatBytes = [0x0A, 4, .. "beta"u8, 0x15, 0, 0, 0, 0, 0xA0, 0x01, 0x01];
        Assert.Equal(floatBytes, zeroFloat.ToByteArray());
        Assert.True(AttributeProto.Parser.ParseFrom(floatBytes).HasF);

        // Unset stays absent: nothing is invented for a field nobody set.
        Assert.Equal([0x0A, 4, .. "axis"u8, 0xA0, 0x01, 0x07], new AttributeProto { Name = "axis", Type = AttributeProto.Types.AttributeType.Ints }.ToByteArray());
    }
}
