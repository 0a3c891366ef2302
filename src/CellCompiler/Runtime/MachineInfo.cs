using System.Runtime.InteropServices;
using Microsoft.ML.OnnxRuntime;

namespace CellCompiler.Runtime;

/// <summary>What a latency figure depends on, recorded with it so that it can be reproduced.</summary>
public static class MachineInfo
{
    public static string RuntimeVersion { get; } = OrtEnv.Instance().GetVersionString();

    public static string Processor { get; } = ReadProcessor();

    private static string ReadProcessor()
    {
        try
        {
            if (File.Exists("/proc/cpuinfo"))
                foreach (var line in File.ReadLines("/proc/cpuinfo"))
                    if (line.StartsWith("model name", StringComparison.Ordinal))
                        return line[(line.IndexOf(':') + 1)..].Trim();
        }
        catch (IOException) { }
        return $"{RuntimeInformation.ProcessArchitecture} ({Environment.ProcessorCount} logical processors)";
    }
}
