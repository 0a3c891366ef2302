using System.Text;
using System.Text.Json.Nodes;

namespace CellCompiler.Tests.Fuzzing;

/// <summary>
/// Structure-aware mutations of JSON documents: each picks a random place in the tree (an object
/// member, an array item or a value) and damages it the way mistakes and attacks do: wrong types,
/// extreme numbers, odd strings, missing and unknown fields, duplicated keys, deep nesting, swapped
/// or huge arrays. Raw byte mutations (flips, cuts, invalid UTF-8) complete them. Deterministic for
/// a System.Random seed (test data only; the product's generator is its own).
/// </summary>
internal sealed class JsonMutator(Random random)
{
    private static readonly string[] OddStrings =
    [
        "", " ", "none", "identity", "cell", "conv1x1", "conv3x3", "sepconv3x3", "maxpool3x3", "CONV1X1", "conv5x5",
        "m0_0", "*", "\u0000", "\u001b[31mred", "é", "\uD83D\uDE00", "a/b", "e0:x", "n1:concat", "../../etc/passwd",
        new string('x', 300), "sepconv", "mbconv", "relu6", "hardswish", "gelu", "genotype/1", "genotype/2", "skeleton/1",
        "concat", "sum", "1e3", "NaN", "-0",
    ];

    private static readonly double[] OddNumbers =
    [
        0, 1, 2, 3, 4, 5, 6, 7, 8, 9, -1, -2, 63, 64, 65, 255, 256, 257, 1000, 16384, 16385, 100000, 2147483647, 2147483648,
        -2147483649, 9007199254740993, 0.5, 1.5, 2.0000001, -0.0, 1e-9, 1e308, 0.25, 0.2500, 1.0,
    ];

    private static readonly string[] OddKeys =
        ["format", "name", "levels", "nodes", "motifs", "edges", "id", "meta", "primitives", "kind", "kernel", "dilation", "repeat",
         "expand", "se", "act", "colour", "Levels", "", "input", "classes", "stem", "stages", "cells", "channels", "reduction", "merge"];

    public JsonNode? Mutate(JsonNode? root, int rounds)
    {
        for (var i = 0; i < rounds; i++)
            root = MutateOnce(root);
        return root;
    }

    private JsonNode? MutateOnce(JsonNode? root)
    {
        var places = new List<(JsonNode? Parent, object Key, JsonNode? Node)>();
        Collect(null, "", root, places);
        var (parent, key, node) = places[random.Next(places.Count)];
        var replacement = Damage(node);
        if (parent is null) return replacement;
        switch (parent)
        {
            case JsonObject o when key is string name:
                switch (random.Next(4))
                {
                    case 0: o.Remove(name); break;                                     // a missing field
                    case 1: o[OddKeys[random.Next(OddKeys.Length)]] = replacement; break; // an unknown or repeated-meaning field
                    default: o[name] = replacement; break;
                }
                break;
            case JsonArray a when key is int index:
                switch (random.Next(5))
                {
                    case 0: a.RemoveAt(index); break;
                    case 1: a.Insert(index, replacement); break;
                    case 2: a.Add(Clone(a[random.Next(a.Count)])); break; // a duplicated item (edge, stage)
                    default: a[index] = replacement; break;
                }
                break;
        }
        return root;
    }

    private static void Collect(JsonNode? parent, object key, JsonNode? node, List<(JsonNode?, object, JsonNode?)> places)
    {
        places.Add((parent, key, node));
        switch (node)
        {
            case JsonObject o:
                foreach (var (name, child) in o.ToList()) Collect(o, name, child, places);
                break;
            case JsonArray a:
                for (var i = 0; i < a.Count; i++) Collect(a, i, a[i], places);
                break;
        }
    }

    private JsonNode? Damage(JsonNode? node) => random.Next(10) switch
    {
        0 => null,
        1 => JsonValue.Create(OddNumbers[random.Next(OddNumbers.Length)]),
        2 => JsonValue.Create(OddStrings[random.Next(OddStrings.Length)]),
        3 => JsonValue.Create(random.Next(2) == 0),
        4 => new JsonArray(),
        5 => new JsonObject(),
        6 => Nest(random.Next(5, 40)),
        7 => Wide(node),
        8 => node is null ? null : Clone(node), // unchanged here; the parent's change matters
        _ => JsonValue.Create(random.Next(-3, 70)),
    };

    private static JsonNode Nest(int depth)
    {
        JsonNode inner = JsonValue.Create(1);
        for (var i = 0; i < depth; i++) inner = new JsonArray(inner);
        return inner;
    }

    /// <summary>Many copies of a node: long edge lists, many motifs, many stages.</summary>
    private JsonNode Wide(JsonNode? node)
    {
        var array = new JsonArray();
        var copies = random.Next(2, 300);
        for (var i = 0; i < copies; i++) array.Add(node is null ? null : Clone(node));
        return array;
    }

    private static JsonNode? Clone(JsonNode? node) => node?.DeepClone();

    /// <summary>Byte-level damage: flips, cuts, insertions, invalid UTF-8, a byte order mark, NULs.</summary>
    public byte[] MutateBytes(byte[] bytes)
    {
        var data = new List<byte>(bytes);
        var rounds = random.Next(1, 6);
        for (var r = 0; r < rounds && data.Count > 0; r++)
        {
            var at = random.Next(data.Count);
            switch (random.Next(7))
            {
                case 0: data[at] ^= (byte)(1 << random.Next(8)); break;
                case 1: data.RemoveRange(at, data.Count - at); break;
                case 2: data.InsertRange(at, [0xC3, 0x28]); break;           // invalid UTF-8
                case 3: data.InsertRange(0, [0xEF, 0xBB, 0xBF]); break;      // byte order mark
                case 4: data.Insert(at, 0); break;
                case 5: data.InsertRange(at, Encoding.UTF8.GetBytes(random.Next(2) == 0 ? "," : "}")); break;
                default: data.RemoveAt(at); break;
            }
        }
        return [.. data];
    }
}
