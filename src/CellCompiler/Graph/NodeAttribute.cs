namespace CellCompiler.Graph;

/// <summary>An ONNX node attribute; the closed set of kinds our ops use.</summary>
public abstract record NodeAttribute(string Name);

public sealed record IntAttribute(string Name, long Value) : NodeAttribute(Name);

public sealed record IntsAttribute(string Name, long[] Values) : NodeAttribute(Name);

public sealed record FloatAttribute(string Name, float Value) : NodeAttribute(Name);
