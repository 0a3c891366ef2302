namespace CellCompiler.Cli;

/// <summary>An output file cannot be written where the user asked.</summary>
public sealed class OutputException(string message) : Exception(message);
