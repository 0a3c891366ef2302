using System.Text.Json;

namespace CellCompiler.Input;

/// <summary>
/// Typed access to a JsonElement that reports problems as <see cref="InputException"/> with the
/// file name and JSON path, so that every reader phrases errors the same way.
/// </summary>
internal readonly struct JsonWalk(string origin, JsonElement element, string path)
{
    public string Origin { get; } = origin;
    public JsonElement Element { get; } = element;
    public string Path { get; } = path;

    public static JsonDocument ParseDocument(string origin, ReadOnlyMemory<byte> utf8)
    {
        if (utf8.Length > Limits.MaxJsonBytes)
            throw new InputException(origin, "",
                $"the JSON is {utf8.Length:N0} bytes; the limit is {Limits.MaxJsonBytes:N0} bytes (1 MiB)");
        // Editors on some systems write a UTF-8 byte order mark; it carries no meaning here.
        if (utf8.Span.StartsWith((ReadOnlySpan<byte>)[0xEF, 0xBB, 0xBF]))
            utf8 = utf8[3..];
        try
        {
            // Duplicate keys are found by RequireObject, which can name their JSON path.
            var document = JsonDocument.Parse(utf8, new JsonDocumentOptions
            {
                AllowTrailingCommas = false,
                CommentHandling = JsonCommentHandling.Disallow,
                MaxDepth = 16,
            });
            try
            {
                RequireValidText(origin, document.RootElement, "");
            }
            catch
            {
                document.Dispose();
                throw;
            }
            return document;
        }
        catch (JsonException e)
        {
            var where = e.LineNumber is { } line ? $" at line {line + 1}, column {(e.BytePositionInLine ?? 0) + 1}" : "";
            throw new InputException(origin, "", $"malformed JSON{where}: {FirstSentence(e.Message)}");
        }
    }

    /// <summary>
    /// Every key and string must be valid Unicode (no lone surrogate escapes, no invalid UTF-8), so that
    /// later reads cannot fail halfway through a document.
    /// </summary>
    private static void RequireValidText(string origin, JsonElement element, string path)
    {
        switch (element.ValueKind)
        {
            case JsonValueKind.Object:
                foreach (var property in element.EnumerateObject())
                {
                    string name;
                    try { name = property.Name; }
                    catch (InvalidOperationException) { throw new InputException(origin, path, "a key is not valid Unicode text"); }
                    if (HasLoneSurrogate(name)) throw new InputException(origin, path, "a key is not valid Unicode text");
                    RequireValidText(origin, property.Value, Join(path, name));
                }
                break;
            case JsonValueKind.Array:
                var index = 0;
                foreach (var item in element.EnumerateArray())
                    RequireValidText(origin, item, $"{path}[{index++}]");
                break;
            case JsonValueKind.String:
                string text;
                try { text = element.GetString()!; }
                catch (InvalidOperationException) { throw new InputException(origin, path, "the string is not valid Unicode text"); }
                if (HasLoneSurrogate(text)) throw new InputException(origin, path, "the string is not valid Unicode text (a lone surrogate escape)");
                break;
        }
    }

    private static bool HasLoneSurrogate(string text)
    {
        for (var i = 0; i < text.Length; i++)
        {
            if (char.IsHighSurrogate(text[i]) && i + 1 < text.Length && char.IsLowSurrogate(text[i + 1])) { i++; continue; }
            if (char.IsSurrogate(text[i])) return true;
        }
        return false;
    }

    private static string FirstSentence(string message)
    {
        foreach (var marker in new[] { " Path:", " LineNumber:" })
        {
            var cut = message.IndexOf(marker, StringComparison.Ordinal);
            if (cut > 0) message = message[..cut];
        }
        return message.Trim();
    }

    public InputException Error(string problem) => new(Origin, Path, problem);

    public JsonWalk Property(string name) => new(Origin, Element.GetProperty(name), Join(Path, name));

    public JsonWalk Item(int index) => new(Origin, Element[index], $"{Path}[{index}]");

    public static string Join(string path, string name) => path.Length == 0 ? name : $"{path}.{name}";

    public JsonWalk RequireObject(params string[] allowed)
    {
        if (Element.ValueKind != JsonValueKind.Object)
            throw Error($"expected an object, found {Describe(Element)}");
        RequireUniqueKeys();
        foreach (var property in Element.EnumerateObject())
            if (Array.IndexOf(allowed, property.Name) < 0)
                throw new InputException(Origin, Join(Path, property.Name),
                    $"unknown field '{property.Name}' (allowed here: {string.Join(", ", allowed)})");
        return this;
    }

    /// <summary>Like <see cref="RequireObject"/>, but records every unknown field and goes on; false if this is not an object at all.</summary>
    public bool RequireObject(ProblemList problems, params string[] allowed)
    {
        if (Element.ValueKind != JsonValueKind.Object)
        {
            problems.Add(Error($"expected an object, found {Describe(Element)}"));
            return false;
        }
        var walk = this;
        if (!problems.Try(() => walk.RequireUniqueKeys())) return false;
        foreach (var property in Element.EnumerateObject())
            if (Array.IndexOf(allowed, property.Name) < 0)
                problems.Add(new InputException(Origin, Join(Path, property.Name),
                    $"unknown field '{property.Name}' (allowed here: {string.Join(", ", allowed)})"));
        return true;
    }

    /// <summary>A repeated key would silently override the first; for a typo-proof format that is an error.</summary>
    public void RequireUniqueKeys()
    {
        var seen = new HashSet<string>(StringComparer.Ordinal);
        foreach (var property in Element.EnumerateObject())
            if (!seen.Add(property.Name))
                throw Error($"the key '{property.Name}' appears more than once");
    }

    public bool Has(string name) => Element.TryGetProperty(name, out _);

    public JsonWalk Required(string name)
    {
        if (!Element.TryGetProperty(name, out var value))
            throw Error($"missing required field '{name}'");
        return new JsonWalk(Origin, value, Join(Path, name));
    }

    public int RequireInt(int min, int max)
    {
        if (Element.ValueKind != JsonValueKind.Number || !Element.TryGetInt64(out var value))
            throw Error($"expected an integer, found {Describe(Element)}");
        if (value < min || value > max)
            throw Error($"{value} is out of range: must be between {min} and {max}");
        return (int)value;
    }

    /// <summary>A number read exactly (JSON text to decimal), within [min, max].</summary>
    public decimal RequireDecimal(decimal min, decimal max)
    {
        if (Element.ValueKind != JsonValueKind.Number || !Element.TryGetDecimal(out var value))
            throw Error($"expected a number, found {Describe(Element)}");
        if (value < min || value > max)
            throw Error($"{Element.GetRawText()} is out of range: must be between {min} and {max}");
        // Trailing zeros (0.250) carry no meaning; drop them so equal values print equally.
        return value / 1.0000000000000000000000000000m;
    }

    public string RequireString()
    {
        if (Element.ValueKind != JsonValueKind.String)
            throw Error($"expected a string, found {Describe(Element)}");
        return Element.GetString()!;
    }

    public bool RequireBool()
    {
        if (Element.ValueKind is not (JsonValueKind.True or JsonValueKind.False))
            throw Error($"expected true or false, found {Describe(Element)}");
        return Element.GetBoolean();
    }

    public int RequireArray(int minLength, int maxLength, string what)
    {
        if (Element.ValueKind != JsonValueKind.Array)
            throw Error($"expected an array, found {Describe(Element)}");
        var length = Element.GetArrayLength();
        if (length < minLength)
            throw Error($"needs at least {minLength} {what}, found {length}");
        if (length > maxLength)
            throw Error($"has {length} {what}; the limit is {maxLength}");
        return length;
    }

    public static string Describe(JsonElement element) => element.ValueKind switch
    {
        JsonValueKind.Object => "an object",
        JsonValueKind.Array => "an array",
        JsonValueKind.String => $"the string \"{Truncate(element.GetString()!)}\"",
        JsonValueKind.Number => $"the number {element.GetRawText()}",
        JsonValueKind.True or JsonValueKind.False => element.GetRawText(),
        JsonValueKind.Null => "null",
        _ => "nothing",
    };

    private static string Truncate(string text) => text.Length <= 40 ? text : text[..40] + "...";
}
