using CellCompiler.Input;

namespace CellCompiler.Screening;

/// <summary>One genotype to screen, or the reason it could not be read.</summary>
public sealed record Candidate(string Id, Genotype? Genotype, InputException? Error)
{
    public static Candidate Valid(string id, Genotype genotype) => new(id, genotype, null);
    public static Candidate Invalid(string id, InputException error) => new(id, null, error);
}
