using System.Numerics;
using CellCompiler.Vocabulary;

namespace CellCompiler.TorchExport;

/// <summary>
/// A channel count as Python integer arithmetic: a sum of whole multiples of terms (a class's
/// constructor parameter `c`, or a squeeze-excitation's max(1, c * p // q)) plus a constant. Inside
/// a primitive or motif class the count depends on the cell's channels, so it stays symbolic; the
/// network class knows every count.
/// </summary>
internal sealed class PyChannels
{
    private readonly IReadOnlyList<(string Term, int Count)> _terms;

    private PyChannels(IReadOnlyList<(string Term, int Count)> terms, long constant)
    {
        _terms = terms;
        Constant = constant;
    }

    public long Constant { get; }

    public bool IsConstant => _terms.Count == 0;

    public static PyChannels Of(long channels) => new([], channels);

    /// <summary>A Python expression that evaluates to a positive integer, e.g. the parameter "c".</summary>
    public static PyChannels Symbol(string expression) => new([(expression, 1)], 0);

    public PyChannels Plus(PyChannels other)
    {
        var terms = _terms.ToList();
        foreach (var (term, count) in other._terms)
        {
            var at = terms.FindIndex(t => t.Term == term);
            if (at < 0) terms.Add((term, count));
            else terms[at] = (term, terms[at].Count + count);
        }
        return new PyChannels(terms, checked(Constant + other.Constant));
    }

    public PyChannels Times(int factor) =>
        new(_terms.Select(t => (t.Term, checked(t.Count * factor))).ToList(), checked(Constant * factor));

    /// <summary>
    /// A channel size (contract 3.1) inside a cell whose channel count is <paramref name="cell"/>. As in
    /// the network builder, a primitive's input channel count Cin is the cell's C.
    /// </summary>
    public static PyChannels Resolve(ChannelSize size, PyChannels cell) => size switch
    {
        ChannelSize.Cell => cell,
        ChannelSize.Expanded e => cell.Times(e.Factor),
        ChannelSize.Squeezed s when cell.IsConstant => Of(s.Resolve(checked((int)cell.Constant), checked((int)cell.Constant))),
        ChannelSize.Squeezed s => Symbol(Squeeze(cell, s.Ratio)),
        ChannelSize.Fixed f => Of(f.Channels),
        _ => throw new InvalidOperationException($"unknown channel size {size.GetType().Name}"),
    };

    /// <summary>
    /// max(1, floor(Cin * ratio)) in exact integer arithmetic: the decimal ratio is p / q in lowest
    /// terms, and for positive integers floor(Cin * p / q) is Python's Cin * p // q.
    /// </summary>
    private static string Squeeze(PyChannels cell, decimal ratio)
    {
        if (ratio <= 0) throw new InvalidOperationException($"a squeeze ratio must be positive, found {ratio}");
        var (p, q) = Fraction(ratio);
        var c = cell.IsAtom ? cell.ToString() : $"({cell})";
        var scaled = p.IsOne ? c : $"{c} * {p}";
        return q.IsOne ? $"max(1, {scaled})" : $"max(1, {scaled} // {q})";
    }

    /// <summary>A positive decimal as numerator and denominator in lowest terms.</summary>
    public static (BigInteger Numerator, BigInteger Denominator) Fraction(decimal value)
    {
        var bits = decimal.GetBits(value);
        var scale = (bits[3] >> 16) & 0xFF;
        var mantissa = new BigInteger((uint)bits[0]) | (new BigInteger((uint)bits[1]) << 32) | (new BigInteger((uint)bits[2]) << 64);
        var denominator = BigInteger.Pow(10, scale);
        var gcd = BigInteger.GreatestCommonDivisor(mantissa, denominator);
        return (mantissa / gcd, denominator / gcd);
    }

    private bool IsAtom => (_terms.Count == 1 && _terms[0].Count == 1 && Constant == 0) || IsConstant;

    public override string ToString()
    {
        var parts = _terms.Where(t => t.Count != 0)
            .Select(t => t.Count == 1 ? t.Term : $"{PyText.Int(t.Count)} * {t.Term}")
            .ToList();
        if (Constant != 0 || parts.Count == 0) parts.Add(PyText.Int(Constant));
        return string.Join(" + ", parts);
    }
}
