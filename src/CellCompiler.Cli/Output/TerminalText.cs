using System.Text;

namespace CellCompiler.Cli.Output;

/// <summary>
/// Text from files (model, node, genotype and reason text) made safe to print for a person: a
/// control character could otherwise move the cursor or rewrite the user's terminal. Each one is
/// shown as an escape (\n, \t, \e, or \uXXXX), so nothing is hidden and nothing is executed.
/// </summary>
public static class TerminalText
{
    public static string Safe(string? text)
    {
        if (string.IsNullOrEmpty(text)) return text ?? "";
        var clean = true;
        foreach (var c in text)
            if (IsUnsafe(c)) { clean = false; break; }
        if (clean) return text;

        var sb = new StringBuilder(text.Length + 16);
        foreach (var c in text)
        {
            if (!IsUnsafe(c)) { sb.Append(c); continue; }
            sb.Append(c switch
            {
                '\n' => "\\n",
                '\r' => "\\r",
                '\t' => "\\t",
                '\u001b' => "\\e",
                _ => $"\\u{(int)c:X4}",
            });
        }
        return sb.ToString();
    }

    /// <summary>C0 and C1 control characters and DEL, plus the bidirectional overrides that reorder what a terminal shows.</summary>
    private static bool IsUnsafe(char c) =>
        char.IsControl(c) || c is >= '\u202A' and <= '\u202E' or >= '\u2066' and <= '\u2069';
}
