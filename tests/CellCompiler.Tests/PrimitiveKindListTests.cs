using CellCompiler.Vocabulary;

namespace CellCompiler.Tests;

/// <summary>
/// <see cref="PrimitiveKinds"/> lists the kinds by hand (the native build cannot discover them by
/// reflection); here, in the JIT-run tests where reflection works, the list is held to every
/// concrete <see cref="PrimitiveKind"/> the library defines, so a new kind cannot be forgotten.
/// </summary>
public sealed class PrimitiveKindListTests
{
    [Fact]
    public void The_list_holds_every_concrete_kind_exactly_once()
    {
        var defined = typeof(PrimitiveKind).Assembly.GetTypes()
            .Where(t => t.IsSubclassOf(typeof(PrimitiveKind)) && !t.IsAbstract)
            .Select(t => t.FullName!)
            .Order(StringComparer.Ordinal);
        var listed = PrimitiveKinds.All.Select(k => k.GetType().FullName!).Order(StringComparer.Ordinal);
        Assert.Equal(defined, listed);
        // The contract's kinds (section 3.1), ordered by name.
        Assert.Equal(["avgpool", "conv", "dwconv", "factorized", "maxpool", "mbconv", "sepconv"], PrimitiveKinds.All.Select(k => k.Name));
    }
}
