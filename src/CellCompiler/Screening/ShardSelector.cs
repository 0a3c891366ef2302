using System.Security.Cryptography;
using System.Text;

namespace CellCompiler.Screening;

/// <summary>
/// Shard K of N: the candidates whose id hashes to K modulo N (SHA-256 of the id's UTF-8 bytes),
/// so the split is stable across runs and machines and N shards cover a population exactly once.
/// </summary>
public sealed record ShardSelector(int Index, int Count)
{
    public static readonly ShardSelector All = new(0, 1);

    public bool Contains(string id) => Count == 1 || ShardOf(id, Count) == Index;

    public static int ShardOf(string id, int count)
    {
        Span<byte> digest = stackalloc byte[32];
        SHA256.HashData(Encoding.UTF8.GetBytes(id), digest);
        return (int)(BitConverter.ToUInt64(digest[..8]) % (ulong)count);
    }

    /// <summary>Parses "K/N" with 0 &lt;= K &lt; N.</summary>
    public static ShardSelector? Parse(string text)
    {
        var parts = text.Split('/');
        if (parts.Length != 2 || !int.TryParse(parts[0], out var index) || !int.TryParse(parts[1], out var count)) return null;
        if (count < 1 || count > 1_000_000 || index < 0 || index >= count) return null;
        return new ShardSelector(index, count);
    }

    public override string ToString() => $"{Index}/{Count}";
}
