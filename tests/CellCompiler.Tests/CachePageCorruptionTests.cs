using CellCompiler.Tests.Support;
using Microsoft.Data.Sqlite;

namespace CellCompiler.Tests;

/// <summary>
/// A cache damaged in one page only (a torn write, a bad sector), through the real process: whichever
/// page it is (the schema, a table's or an index's root, a leaf of entries), a run on it gives the
/// records and exit status of a run without cache and at most one warning, naming the file.
/// <see cref="ReliabilityTests"/> damages every page after the first at once.
/// </summary>
public sealed class CachePageCorruptionTests
{
    [Fact]
    public void Any_one_damaged_page_changes_no_verdict_and_gives_at_most_one_warning()
    {
        using var folder = new TempFolder();
        var population = folder.Write("pop.jsonl", ReliabilityTests.Population(16, 22_100));
        var reference = ProcessRunner.Cellc(["check", population, "--json", "--no-cache"], null, folder.Path);
        Assert.DoesNotContain("warning", reference.Stderr);
        var pristine = folder.File("pristine.db");
        ProcessRunner.Cellc(["check", population, "--json", "--cache", pristine], null, folder.Path);
        // The last connection's close moved the write-ahead log into the file: its pages are the whole cache.
        Assert.True(!File.Exists(pristine + "-wal") || new FileInfo(pristine + "-wal").Length == 0, "the write-ahead log was not checkpointed");
        var bytes = File.ReadAllBytes(pristine);
        var pageBytes = bytes[16] << 8 | bytes[17]; // the header's page size, big-endian
        var pages = bytes.Length / pageBytes;
        Assert.True(pages >= 6, $"the cache has {pages} pages: too few to hold more than the schema and empty tables");
        // Intact, the cache answers every compiled candidate: a run on it reads the pages damaged below.
        var intact = ReliabilityTests.Records(ProcessRunner.Cellc(["check", population, "--json", "--cache", CopyOf(folder, bytes, "intact.db")], null, folder.Path).Stdout);
        Assert.Contains(intact, r => r.GetProperty("cached").GetBoolean());
        Assert.All(intact.Where(r => r.GetProperty("params").ValueKind == System.Text.Json.JsonValueKind.Number), r => Assert.True(r.GetProperty("cached").GetBoolean()));

        var warnedPages = new List<int>();
        for (var page = 1; page <= pages; page++)
        {
            var damaged = (byte[])bytes.Clone();
            new Random(page).NextBytes(damaged.AsSpan((page - 1) * pageBytes, pageBytes));
            var cache = CopyOf(folder, damaged, $"page-{page}.db");

            var result = ProcessRunner.Cellc(["check", population, "--json", "--cache", cache], null, folder.Path);

            Assert.True(reference.ExitCode == result.ExitCode, $"page {page}: exit {result.ExitCode}\n{result.Stderr}");
            ReliabilityTests.SameRecords(ReliabilityTests.Records(reference.Stdout), ReliabilityTests.Records(result.Stdout));
            var warnings = result.Stderr.Split('\n').Where(l => l.Contains("warning", StringComparison.Ordinal)).ToList();
            Assert.True(warnings.Count <= 1, $"page {page}:\n{result.Stderr}");
            if (warnings.Count == 0) continue;
            Assert.Contains(cache, warnings[0]);
            Assert.Contains("without the cache", warnings[0]);
            warnedPages.Add(page);
        }
        // Every page a run reads is noticed when damaged, never read as entries; only the latency table's
        // (empty, unread without --latency) are not.
        Assert.Equal(Enumerable.Range(1, pages).Except(LatencyPages(CopyOf(folder, bytes, "schema.db"))), warnedPages);
    }

    /// <summary>The root pages of the latency table and its key index, from the cache's schema.</summary>
    private static List<int> LatencyPages(string path)
    {
        using var connection = new SqliteConnection($"Data Source={path};Pooling=False");
        connection.Open();
        using var command = connection.CreateCommand();
        command.CommandText = "SELECT rootpage FROM sqlite_master WHERE tbl_name = 'latencies' ORDER BY rootpage;";
        using var reader = command.ExecuteReader();
        var pages = new List<int>();
        while (reader.Read()) pages.Add(reader.GetInt32(0));
        Assert.Equal(2, pages.Count);
        return pages;
    }

    private static string CopyOf(TempFolder folder, byte[] bytes, string name)
    {
        var path = folder.File(name);
        File.WriteAllBytes(path, bytes);
        return path;
    }
}
