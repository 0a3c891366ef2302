using CellCompiler.Io;

namespace CellCompiler.Screening;

/// <summary>A line of a results or shard file that is not a check record, and why.</summary>
public sealed record MalformedLine(LinePlace Place, string Problem);
