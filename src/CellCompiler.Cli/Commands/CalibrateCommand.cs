using System.CommandLine;
using System.Globalization;
using CellCompiler.Cli.Options;
using CellCompiler.Cli.Output;
using CellCompiler.Input;
using CellCompiler.Prediction;
using CellCompiler.Vocabulary;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc calibrate`: measures every unit a network of the skeleton can contain into a latency table.</summary>
public static class CalibrateCommand
{
    public static Command Create()
    {
        var output = new Option<string>("--output", "-o")
        {
            HelpName = "TABLE",
            Description = "The latency table to write (JSON). An existing table made on this machine under the same conditions keeps " +
                          "its other units and its anchor (the reference every unit is scaled to); the units measured now replace theirs.",
            Required = true,
        };
        var primitives = new Option<string?>("--primitives")
        {
            HelpName = "FILE",
            Description = "Also calibrate the primitives declared in FILE (a JSON object of declarations, as a genotype's `primitives` field).",
        };
        var maxFanIn = new Option<int>("--max-fan-in")
        {
            HelpName = "K",
            Description = $"Calibrate merges of 2 to K inputs (default {CalibrationRequest.DefaultMaxFanIn}); a node with more is measured when first met.",
            DefaultValueFactory = _ => CalibrationRequest.DefaultMaxFanIn,
            CustomParser = r => HumanNumber.WholeNumber(2, Limits.MaxNodes - 1)(r),
        };
        var threads = new Option<int>("--threads")
        {
            HelpName = "N",
            Description = "ONNX Runtime intra-op threads to calibrate for (predictions are refused for other thread counts).",
            DefaultValueFactory = _ => 1,
            CustomParser = r => HumanNumber.WholeNumber(1, 256)(r),
        };
        var fitNetworks = new Option<int>("--fit-networks")
        {
            HelpName = "K",
            Description = $"Measure K whole sampled networks and fit the ratio of their time to their units' sum (default {CalibrationRequest.DefaultFitNetworks}, at least {NetworkFit.MinNetworks}; 0: predict the plain sum).",
            DefaultValueFactory = _ => CalibrationRequest.DefaultFitNetworks,
            CustomParser = r =>
            {
                var k = HumanNumber.WholeNumber(0, 1000)(r);
                if (k is > 0 and < NetworkFit.MinNetworks)
                    r.AddError($"--fit-networks must be 0 or at least {NetworkFit.MinNetworks} (a ratio from fewer networks is not fitted), found {k}");
                return k;
            },
        };
        var skeleton = new SkeletonOptions();
        var settings = new CompileSettingsOptions();

        var command = new Command("calibrate",
            "Measure, with ONNX Runtime on this CPU and the session settings of `bench`, every unit a network of the skeleton can contain " +
            "(each primitive at each stage's size, merges by fan-in, the stem, reductions, head and the per-run cost) into a latency table " +
            "for `check --latency-table` and `bench --latency-table`. Run it on a quiet machine: background load distorts it.");
        foreach (var option in new Option[] { output, primitives, maxFanIn, threads, fitNetworks })
            command.Options.Add(option);
        skeleton.AddTo(command);
        // The opset decides some ops (HardSwish before 14); the seed only weight values, which do not change latency.
        command.Options.Add(settings.Opset);

        command.SetAction(parse =>
        {
            var path = parse.GetValue(output)!;
            var table = parse.GetValue(primitives) is { } file ? PrimitiveDeclarations.ReadFile(file) : PrimitiveTable.BuiltinsOnly;
            var request = new CalibrationRequest(skeleton.Resolve(parse), table, parse.GetValue(maxFanIn), parse.GetValue(threads), parse.GetValue(settings.Opset),
                parse.GetValue(fitNetworks));
            var startLoad = SystemLoad.OneMinute();
            Console.Error.WriteLine($"cellc calibrate: {Wording.Counted(Calibration.Plan(request).Count, "unit")} (and the anchor, if the table has none) of {CompileReport.DescribeSkeleton(request.Skeleton)}, " +
                                    $"{Wording.Counted(request.Threads, "thread")}, opset {request.Opset}{LoadNote(startLoad)}");
            if (startLoad is { } load && load > Environment.ProcessorCount)
                Console.Error.WriteLine($"cellc calibrate: warning: the load average ({Number(load)}) exceeds the {Environment.ProcessorCount} cores: " +
                                        "other work will distort the table; calibrate when the machine is quiet");
            var result = Calibration.Run(path, request, step => Console.Error.WriteLine(
                $"cellc calibrate: [{step.Done}/{step.Total}] {TerminalText.Safe(step.Unit)}: {step.Ms.ToString("0.0000", CultureInfo.InvariantCulture)} ms" +
                $"  ({Formatting.Duration(step.Elapsed)} elapsed, about {Formatting.Duration(step.Remaining)} left{LoadNote(step.Load, ", load ")})"));
            var c = result.Conditions;
            if (result.Fit is { } fit)
                Console.Out.WriteLine($"Fitted to {Wording.Counted(fit.Networks, "whole network")}: predicted = " +
                                      $"{fit.Slope.ToString("0.000", CultureInfo.InvariantCulture)} x sum of units (mean error {Wording.Significant(fit.MeanAbsoluteErrorPercent)}% on those networks).");
            else if (request.FitNetworks > 0)
                Console.Out.WriteLine("No whole-network fit: too few networks could be measured; predictions are the plain sum of units.");
            Console.Out.WriteLine($"Wrote {TerminalText.Safe(path)}: {Wording.Counted(result.Count, "unit")} in all, for {TerminalText.Safe(c.Processor)}, " +
                                  $"ONNX Runtime {c.OnnxRuntime}, {Wording.Counted(c.Threads, "thread")}, opset {c.Opset}.");
            Console.Out.WriteLine("Predictions from this table hold only on this machine model, with this ONNX Runtime version, thread count and " +
                                  "session settings; background load during calibration distorts them (the table records the load average of each unit).");
            return ExitCodes.Ok;
        });
        return command;
    }

    private static string LoadNote(double? load, string prefix = "; load average ") => load is { } l ? prefix + Number(l) : "";

    private static string Number(double value) => value.ToString("0.00", CultureInfo.InvariantCulture);
}
