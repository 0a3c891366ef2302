using System.Globalization;
using System.Text;

namespace CellCompiler.TorchExport;

/// <summary>Python source text: literals, identifiers and the names a generated module may not take.</summary>
internal static class PyText
{
    private static readonly HashSet<string> Keywords =
    [
        "False", "None", "True", "and", "as", "assert", "async", "await", "break", "class", "continue", "def", "del",
        "elif", "else", "except", "finally", "for", "from", "global", "if", "import", "in", "is", "lambda", "nonlocal",
        "not", "or", "pass", "raise", "return", "try", "while", "with", "yield",
    ];

    /// <summary>
    /// torch.nn.Module members a submodule attribute would hide or be hidden by (attribute lookup finds
    /// the method first, so `self.train = nn.Conv2d(...)` would silently never be called).
    /// </summary>
    private static readonly HashSet<string> ModuleMembers =
    [
        "training", "forward", "train", "eval", "parameters", "buffers", "children", "modules", "named_parameters",
        "named_buffers", "named_children", "named_modules", "apply", "cuda", "cpu", "to", "type", "float", "double",
        "half", "bfloat16", "state_dict", "load_state_dict", "zero_grad", "register_buffer", "register_parameter",
        "add_module", "register_module", "get_submodule", "get_parameter", "get_buffer", "extra_repr",
        "requires_grad_", "share_memory", "dump_patches", "xpu", "ipu", "to_empty",
    ];

    public static bool IsIdentifier(string text)
    {
        if (text.Length == 0 || !(char.IsAsciiLetter(text[0]) || text[0] == '_')) return false;
        foreach (var c in text)
            if (!(char.IsAsciiLetterOrDigit(c) || c == '_')) return false;
        return !Keywords.Contains(text);
    }

    /// <summary>Whether <paramref name="name"/> can be a submodule attribute of a generated class.</summary>
    public static bool IsModuleAttribute(string name) => IsIdentifier(name) && !name.StartsWith('_') && !ModuleMembers.Contains(name);

    /// <summary>An ASCII identifier made from any text: other characters become '_'.</summary>
    public static string Sanitize(string text)
    {
        var sb = new StringBuilder(text.Length);
        foreach (var c in text)
            sb.Append(char.IsAsciiLetterOrDigit(c) || c == '_' ? c : '_');
        var result = sb.ToString();
        return IsIdentifier(result) ? result : "_" + result;
    }

    /// <summary>A double-quoted Python string literal; non-ASCII text stays as it is (the file is UTF-8).</summary>
    public static string Str(string text)
    {
        var sb = new StringBuilder(text.Length + 2).Append('"');
        foreach (var c in text)
        {
            switch (c)
            {
                case '\\': sb.Append("\\\\"); break;
                case '"': sb.Append("\\\""); break;
                case '\n': sb.Append("\\n"); break;
                case '\r': sb.Append("\\r"); break;
                case '\t': sb.Append("\\t"); break;
                default:
                    if (c < 0x20 || c == 0x7f) sb.Append("\\x").Append(((int)c).ToString("x2", CultureInfo.InvariantCulture));
                    else sb.Append(c);
                    break;
            }
        }
        return sb.Append('"').ToString();
    }

    public static string Int(long value) => value.ToString(CultureInfo.InvariantCulture);

    public static string Decimal(decimal value) => value.ToString(CultureInfo.InvariantCulture);

    /// <summary>A Python float literal that reads back as the same double, e.g. 1e-05 or 0.1.</summary>
    public static string Float(double value)
    {
        if (!double.IsFinite(value)) throw new ArgumentOutOfRangeException(nameof(value), "only finite values have a literal here");
        var text = value.ToString("R", CultureInfo.InvariantCulture).Replace("E", "e", StringComparison.Ordinal);
        return text.Contains('.') || text.Contains('e') ? text : text + ".0";
    }

    /// <summary>(a, b) as a Python int when both are equal, else a tuple.</summary>
    public static string Pair(int a, int b) => a == b ? Int(a) : $"({Int(a)}, {Int(b)})";
}
