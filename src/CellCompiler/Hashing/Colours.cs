namespace CellCompiler.Hashing;

/// <summary>
/// 128-bit colours for refinement. A colour only orders and groups nodes; every certificate that
/// decides equality is an exact description of the graph, so a collision here can at worst cost
/// canonicity (two relabellings of one network hashing apart), never merge two networks. Written
/// here rather than taken from a package: two splitmix64 finalizers are all it needs.
/// </summary>
internal static class Colours
{
    public const ulong Forward = 0x9E3779B97F4A7C15UL;
    public const ulong Backward = 0xC2B2AE3D27D4EB4FUL;
    public const ulong Individualised = 0x165667B19E3779F9UL;

    /// <summary>A well-mixed image of a colour; summing images gives an order-free multiset digest.</summary>
    public static UInt128 Spread(UInt128 colour)
    {
        var lo = (ulong)colour;
        var hi = (ulong)(colour >> 64);
        var a = Mix(lo + Mix(hi ^ 0xD6E8FEB86659FD93UL));
        var b = Mix(hi + Mix(lo ^ 0xA0761D6478BD642FUL));
        return ((UInt128)b << 64) | a;
    }

    /// <summary>The next colour of a node from its current colour and a digest of its neighbours' colours.</summary>
    public static UInt128 Combine(UInt128 colour, UInt128 neighbours, ulong direction)
    {
        var lo = (ulong)colour ^ direction;
        var hi = (ulong)(colour >> 64);
        var nlo = (ulong)neighbours;
        var nhi = (ulong)(neighbours >> 64);
        var a = Mix(lo + Mix(nlo ^ Mix(hi + direction)));
        var b = Mix(hi ^ Mix(nhi + Mix(lo ^ nlo)) + direction);
        return ((UInt128)b << 64) | a;
    }

    private static ulong Mix(ulong x)
    {
        x ^= x >> 30;
        x *= 0xBF58476D1CE4E5B9UL;
        x ^= x >> 27;
        x *= 0x94D049BB133111EBUL;
        x ^= x >> 31;
        return x;
    }
}
