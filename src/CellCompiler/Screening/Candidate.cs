using CellCompiler.Input;
using CellCompiler.Io;

namespace CellCompiler.Screening;

/// <summary>One genotype to screen, or the reason it could not be read; <see cref="Place"/> is its file and line.</summary>
public sealed record Candidate(string Id, Genotype? Genotype, InputException? Error, LinePlace Place = default)
{
    public static Candidate Valid(string id, Genotype genotype, LinePlace place = default) => new(id, genotype, null, place);
    public static Candidate Invalid(string id, InputException error, LinePlace place = default) => new(id, null, error, place);
}
