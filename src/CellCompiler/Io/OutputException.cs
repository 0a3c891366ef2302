namespace CellCompiler.Io;

/// <summary>An output file cannot be written where the user asked (the CLI maps it to exit code 2).</summary>
public sealed class OutputException(string message, Exception? inner = null) : Exception(message, inner);
