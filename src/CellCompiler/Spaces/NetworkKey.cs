using System.Globalization;

namespace CellCompiler.Spaces;

/// <summary>
/// The first 16 bytes of a network hash (SHA-256, hex): enough to tell networks apart when counting
/// them (two distinct networks share a 128-bit prefix with probability about n^2 / 2^129, below 10^-20
/// for a billion networks), at half the memory of the whole digest and without a string per entry.
/// </summary>
public static class NetworkKey
{
    public static UInt128 Of(string hexDigest) =>
        UInt128.Parse(hexDigest.AsSpan(0, 32), NumberStyles.AllowHexSpecifier, CultureInfo.InvariantCulture);
}

/// <summary>
/// A set of <see cref="NetworkKey"/>s shared by parallel workers: 256 stripes, each a plain hash set
/// under its own lock, chosen by the key's low byte (SHA-256 bits are uniform, so the stripes fill
/// evenly and two workers rarely wait for the same lock). About 30 to 60 bytes per distinct network (a 24-byte entry and a 4-byte bucket, up to twice over while a set grows).
/// </summary>
public sealed class NetworkKeySet
{
    private const int Stripes = 256;
    private readonly HashSet<UInt128>[] _stripes = Enumerable.Range(0, Stripes).Select(_ => new HashSet<UInt128>()).ToArray();

    /// <summary>True when the key was not in the set yet.</summary>
    public bool Add(UInt128 key)
    {
        var stripe = _stripes[(int)(key & (Stripes - 1))];
        lock (stripe) return stripe.Add(key);
    }

    public long Count
    {
        get
        {
            long total = 0;
            foreach (var stripe in _stripes)
                lock (stripe) total += stripe.Count;
            return total;
        }
    }
}
