namespace CellCompiler.Figures;

/// <summary>One step of a run: the tensors it reads and the ones it makes.</summary>
public readonly record struct RunStep(IReadOnlyList<string> Reads, IReadOnlyList<string> Makes);

/// <summary>
/// The peak of live tensor bytes over a run, one sweep for our networks (<see cref="FigureCounter"/>)
/// and for any ONNX model (Runtime.RunNeeds): a tensor lives from the step that makes it (the
/// first tensors, such as the input: from the start) to the last step that reads it.
/// </summary>
public static class LiveBytes
{
    public static Int128 Peak(IReadOnlyList<RunStep> steps, IEnumerable<string> first, Func<string, Int128> bytes)
    {
        var lastRead = new Dictionary<string, int>(StringComparer.Ordinal);
        for (var step = 0; step < steps.Count; step++)
            foreach (var input in steps[step].Reads)
                lastRead[input] = step;

        // Sweep: add each tensor's bytes at its birth step and remove them after its last read.
        var delta = new Int128[steps.Count + 1];
        void Live(string tensor, int birth)
        {
            var death = Math.Max(birth, lastRead.GetValueOrDefault(tensor, birth));
            var size = bytes(tensor);
            delta[birth] += size;
            delta[death + 1] -= size;
        }
        foreach (var tensor in first) Live(tensor, 0);
        for (var step = 0; step < steps.Count; step++)
            foreach (var tensor in steps[step].Makes)
                Live(tensor, step);

        Int128 alive = 0, peak = 0;
        for (var step = 0; step < steps.Count; step++)
        {
            alive += delta[step];
            peak = Int128.Max(peak, alive);
        }
        return peak;
    }
}
