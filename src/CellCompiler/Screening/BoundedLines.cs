using System.Text;

namespace CellCompiler.Screening;

/// <summary>
/// JSON Lines splitting shared by every reader of populations and results: "\n" ends a line, a
/// "\r" before it is dropped, and a line longer than the limit is skipped (reported as too long)
/// without ever being held in memory whole.
/// </summary>
public static class BoundedLines
{
    /// <summary>Reads up to a newline into <paramref name="buffer"/>; Complete is false at the end of the input.</summary>
    public static (bool Complete, bool TooLong) Read(TextReader reader, StringBuilder buffer, int maxChars)
    {
        buffer.Clear();
        var tooLong = false;
        while (true)
        {
            var c = reader.Read();
            if (c < 0) return (false, tooLong);
            if (c == '\n')
            {
                if (buffer.Length > 0 && buffer[^1] == '\r') buffer.Length--;
                return (true, tooLong);
            }
            if (tooLong) continue;
            buffer.Append((char)c);
            if (buffer.Length > maxChars)
            {
                tooLong = true;
                buffer.Clear();
            }
        }
    }
}
