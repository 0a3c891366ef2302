namespace CellCompiler.Graph;

/// <summary>A valid genotype and skeleton that still cannot form a network (e.g. a sum over unequal shapes).</summary>
public sealed class CompileException(string message) : Exception(message);
