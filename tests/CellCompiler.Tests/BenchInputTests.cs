using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Inspection;
using CellCompiler.OnnxFormat;
using CellCompiler.Runtime;
using CellCompiler.Tests.Support;
using Google.Protobuf;

namespace CellCompiler.Tests;

/// <summary>The tidepool fixture compiled on the full224 skeleton (about 150 MB), once for the class.</summary>
public sealed class Full224Model : IDisposable
{
    private readonly TempFolder _folder = new();

    public CompiledModel Compiled { get; } =
        Compiler.Compile(GenotypeReader.ReadFile(RepoPaths.Fixture("tidepool-h3.json")), SkeletonPresets.All["full224"]);

    public string Path { get; }

    public Full224Model()
    {
        Path = _folder.File("tidepool-full224.onnx");
        File.WriteAllBytes(Path, Compiled.OnnxBytes);
    }

    public void Dispose() => _folder.Dispose();
}

/// <summary>
/// What `bench` refuses before any ONNX Runtime session (issue 10): a batch whose input cannot be one
/// tensor, or whose run would not fit the memory a measurement may use; and how it reads a model
/// from a pipe (bounded while reading, the bytes kept on disk rather than in memory, exactly as read).
/// </summary>
public sealed class BenchInputTests(Full224Model full224) : IClassFixture<Full224Model>
{
    private static readonly TimeSpan HangGuard = TimeSpan.FromSeconds(60);

    [Fact]
    public void A_batch_whose_input_cannot_be_one_tensor_is_refused_before_any_session()
    {
        var needs = RunNeeds.OfModel(ModelProto.Parser.ParseFrom(full224.Compiled.OnnxBytes), full224.Compiled.OnnxBytes.LongLength);
        // 3 x 224 x 224 = 150,528 values a sample: batch 14,266 holds 2,147,432,448 <= Array.MaxLength (2,147,483,591), 14,267 does not.
        needs.Require(full224.Path, [14_266], availableBytes: long.MaxValue);
        var e = Assert.Throws<InputException>(() => needs.Require(full224.Path, [1, 14_267], availableBytes: long.MaxValue));
        Assert.Equal($"{full224.Path}: --batch: input 'images' [N, 3, 224, 224] at batch 14267 would hold 2,147,582,976 values, " +
                     "more than the 2,147,483,591 one tensor may hold; use a smaller --batch", e.Message);
        // Through the process: refused by the same rule (ModelBench.Read makes no session).
        var cli = ProcessRunner.Cellc("bench", full224.Path, "--batch", "20000", "--warmup", "0", "--runs", "1");
        Assert.Equal(2, cli.ExitCode);
        Assert.Equal($"cellc: error: {full224.Path}: --batch: input 'images' [N, 3, 224, 224] at batch 20000 would hold 3,010,560,000 values, " +
                     "more than the 2,147,483,591 one tensor may hold; use a smaller --batch\n", cli.Stderr);
    }

    [Fact]
    public void The_memory_estimate_of_a_model_file_equals_the_one_from_the_compilers_figures()
    {
        // Read from the file alone (shapes propagated by inspect's rules), the peak of live activations is the compiler's own.
        var figures = full224.Compiled.Figures;
        var bytes = full224.Compiled.OnnxBytes;
        var needs = RunNeeds.OfModel(ModelProto.Parser.ParseFrom(bytes), bytes.LongLength);
        var nodes = figures.OpCounts.Values.Sum();
        foreach (var batch in new[] { 1, 7, 4000 })
            Assert.Equal(RunNeeds.Estimate(bytes.LongLength, (Int128)figures.PeakActivationBytes * batch, nodes), needs.MemoryBytes(batch));
    }

    [Fact]
    public void A_batch_whose_run_would_not_fit_the_memory_is_refused_naming_the_estimate_and_the_limit()
    {
        var figures = full224.Compiled.Figures;
        var bytes = full224.Compiled.OnnxBytes;
        var needs = RunNeeds.OfModel(ModelProto.Parser.ParseFrom(bytes), bytes.LongLength);
        // With 2 GiB to use: batch 2 fits (about 0.55 GB), batch 4000 (its activations alone: 4000 x the peak per sample) does not.
        needs.Require(full224.Path, [1, 2], availableBytes: 1L << 31);
        Assert.Throws<InputException>(() => needs.Require(full224.Path, [4000], availableBytes: 1L << 31));

        // The process with its heap capped at 4 GiB may use half of it: 2.15 GB.
        var expected = RunNeeds.Estimate(bytes.LongLength, (Int128)figures.PeakActivationBytes * 4000, figures.OpCounts.Values.Sum());
        var activations = (double)figures.PeakActivationBytes * 4000;
        var cap = new Dictionary<string, string> { ["DOTNET_GCHeapHardLimit"] = "0x100000000" };
        var cli = ProcessRunner.Run("dotnet", [RepoPaths.CliDll, "bench", full224.Path, "--batch", "4000", "--warmup", "0", "--runs", "1"],
            timeout: TimeSpan.FromMinutes(2), environment: cap);
        Assert.Equal(2, cli.ExitCode);
        Assert.Equal($"cellc: error: {full224.Path}: --batch: batch 4000 needs about {Wording.Significant((double)expected / 1e9)} GB of memory " +
                     $"(estimated before running: weights {Wording.Significant(bytes.Length / 1e9)} GB three times, activations " +
                     $"{Wording.Significant(activations / 1e9)} GB twice), more than the 2.15 GB a measurement may use " +
                     "(half of the memory available); use a smaller --batch\n", cli.Stderr);
        // A genotype is refused before it is compiled, as soon as its input alone would not fit:
        // 3 x 224 x 224 float32 values x 4000 = 2.41 GB, twice over.
        var genotype = ProcessRunner.Run("dotnet", [RepoPaths.CliDll, "bench", RepoPaths.Fixture("tidepool-h3.json"), "--skeleton", "full224",
            "--batch", "4000", "--warmup", "0", "--runs", "1"], timeout: TimeSpan.FromMinutes(2), environment: cap);
        Assert.Equal(2, genotype.ExitCode);
        Assert.Contains("--batch: batch 4000 needs about 4.82 GB of memory (estimated before running: the input alone 2.41 GB twice), " +
                        "more than the 2.15 GB", genotype.Stderr, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_model_from_a_pipe_or_a_file_is_kept_byte_for_byte_and_benched()
    {
        using var folder = new TempFolder();
        var model = InspectMutations.Seeds[1];
        // Field 1000 (a varint), which our schema does not declare and parsing drops: ONNX Runtime must still get it.
        byte[] bytes = [.. model, 0xC0, 0x3E, 0x07];
        var fifo = MakeFifo(folder, "piped.onnx");
        var writer = Task.Run(() => File.WriteAllBytes(fifo, bytes));
        var (proto, kept) = ModelFileReader.ReadWithBytes(fifo);
        await writer.WaitAsync(HangGuard);
        Assert.Equal(bytes, kept);
        Assert.Contains(proto.MetadataProps, p => p.Key == "genotype_hash");
        // From a regular file too (read again once parsed, not spooled).
        var file = folder.File("file.onnx");
        File.WriteAllBytes(file, bytes);
        Assert.Equal(bytes, ModelFileReader.ReadWithBytes(file).Bytes);

        writer = Task.Run(() => File.WriteAllBytes(fifo, bytes));
        var cli = ProcessRunner.Cellc("bench", fifo, "--warmup", "0", "--runs", "1", "--json");
        await writer.WaitAsync(HangGuard);
        Assert.True(cli.ExitCode == 0, cli.Stderr);
        Assert.Contains("\"output_shapes\":[[1,10]]", cli.Stdout, StringComparison.Ordinal);
    }

    [Fact]
    public async Task An_endless_pipe_stops_at_the_limit_while_reading_with_its_bytes_on_disk_not_in_memory()
    {
        using var folder = new TempFolder();
        var pipe = new EndlessProtobufPipe(folder, "endless.onnx");
        var fifo = pipe.Path;
        const long limit = 64 << 20;
        var allocatedBefore = GC.GetAllocatedBytesForCurrentThread();
        var e = Assert.Throws<InputException>(() => ModelFileReader.ReadWithBytes(fifo, limit));
        var allocated = GC.GetAllocatedBytesForCurrentThread() - allocatedBefore;
        Assert.Equal($"{fifo}: the input goes on past 67,108,864 bytes, where reading stopped; the limit is 67,108,864 bytes", e.Message);
        await pipe.Writer.WaitAsync(HangGuard);
        Assert.InRange(pipe.Written, limit, limit + (4 << 20));
        // The 64 MiB read went to the spool file: this thread allocated a small part of it, and the spool
        // is closed (an open one would still be listed among this process's descriptors, as "(deleted)";
        // no other test of this process spools: only this class reads pipes in process through it).
        Assert.InRange(allocated, 0, limit / 16);
        Assert.DoesNotContain(Directory.GetFiles("/proc/self/fd").Select(LinkOf), target => target?.Contains(".cellc-spool-") == true);
    }

    [Fact]
    public void A_model_onnx_runtime_refuses_is_one_escaped_message_without_the_runtimes_own_log()
    {
        using var folder = new TempFolder();
        // The channel shuffle with its last Concat fed the whole shuffled tensor (8 + 4 channels where the
        // next Conv takes 8), whose output is renamed to carry a terminal escape: it loads, and ONNX Runtime
        // refuses it at the first run, naming the Conv after that output (and would log the name raw).
        var model = InspectGraphs.ChannelShuffle();
        model.Graph.Node.Single(n => n.Name == "cat").Input[0] = "u";
        const string escaped = "c2out\u001b[2J";
        foreach (var node in model.Graph.Node)
        {
            for (var i = 0; i < node.Input.Count; i++) if (node.Input[i] == "c2out") node.Input[i] = escaped;
            for (var i = 0; i < node.Output.Count; i++) if (node.Output[i] == "c2out") node.Output[i] = escaped;
        }
        foreach (var info in model.Graph.ValueInfo.Concat(model.Graph.Output).Where(v => v.Name == "c2out")) info.Name = escaped;
        var path = folder.File("refused.onnx");
        File.WriteAllBytes(path, model.ToByteArray());

        var cli = ProcessRunner.Cellc("bench", path, "--warmup", "0", "--runs", "1");
        Assert.Equal(2, cli.ExitCode);
        Assert.Equal("", cli.Stdout);
        var line = Assert.Single(cli.Stderr.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.StartsWith($"cellc: error: {path}: cannot run the model on ONNX Runtime: ", line, StringComparison.Ordinal);
        Assert.Contains("c2out\\e[2J", line, StringComparison.Ordinal);
        Assert.DoesNotContain('\u001b', cli.Stderr);
    }

    private static string? LinkOf(string descriptor)
    {
        try { return new FileInfo(descriptor).LinkTarget; }
        catch (IOException) { return null; } // closed meanwhile
    }

    private static string MakeFifo(TempFolder folder, string name)
    {
        var fifo = folder.File(name);
        Assert.Equal(0, ProcessRunner.Run("mkfifo", [fifo]).ExitCode);
        return fifo;
    }
}
