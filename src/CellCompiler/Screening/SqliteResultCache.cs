using System.Text.Json;
using CellCompiler.Runtime;
using Microsoft.Data.Sqlite;

namespace CellCompiler.Screening;

/// <summary>
/// The result cache in one SQLite file. Write-ahead logging and a busy timeout let several
/// processes (parallel shards on one machine) read and write the same file; within a process,
/// one connection is shared under a lock (every operation is a single short statement).
/// A cache is only ever a shortcut: when the file cannot be opened, read or written (a corrupted
/// page, a full disk, a read-only folder) the problem is told once through the warning callback and
/// the run goes on without the cache, so no verdict ever depends on it.
/// </summary>
public sealed class SqliteResultCache : IResultCache, IDisposable
{
    private readonly Lock _lock = new();
    private readonly string _path;
    private readonly Action<string> _warn;
    private SqliteConnection? _connection;
    private bool _writable = true;

    private SqliteResultCache(string path, Action<string> warn)
    {
        _path = path;
        _warn = warn;
    }

    /// <summary>Opens (or creates) the cache; on failure warns and returns a cache that does nothing.</summary>
    public static SqliteResultCache Open(string path, Action<string> warn)
    {
        var cache = new SqliteResultCache(path, warn);
        try
        {
            var folder = Path.GetDirectoryName(Path.GetFullPath(path));
            if (folder is not null) Directory.CreateDirectory(folder);
            var connection = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = path, Pooling = false }.ToString());
            cache._connection = connection;
            connection.Open();
            cache.Execute("PRAGMA busy_timeout = 60000;");
            cache.Execute("PRAGMA journal_mode = WAL;");
            cache.Execute("PRAGMA synchronous = NORMAL;");
            cache.Execute("CREATE TABLE IF NOT EXISTS evaluations (key TEXT PRIMARY KEY, payload TEXT NOT NULL);");
            cache.Execute("CREATE TABLE IF NOT EXISTS latencies (key TEXT PRIMARY KEY, payload TEXT NOT NULL);");
            // A damaged file can open fine and fail on its first real read: find out now, not per candidate.
            cache.Execute("SELECT count(*) FROM evaluations WHERE key = '';");
        }
        catch (Exception e) when (e is SqliteException or IOException or UnauthorizedAccessException)
        {
            cache.GiveUp("cannot be opened", e);
        }
        return cache;
    }

    /// <summary>The cache answers and stores (false once it was given up).</summary>
    public bool Usable => _connection is not null;

    private void Execute(string sql)
    {
        using var command = _connection!.CreateCommand();
        command.CommandText = sql;
        command.ExecuteNonQuery();
    }

    public Evaluation? FindEvaluation(string key) => Find("evaluations", key, ScreeningJson.Readable.Evaluation);

    public void StoreEvaluation(string key, Evaluation evaluation) =>
        Store("evaluations", key, JsonSerializer.Serialize(evaluation, ScreeningJson.Readable.Evaluation));

    public LatencyReport? FindLatency(string key) => Find("latencies", key, ScreeningJson.Readable.LatencyReport);

    public void StoreLatency(string key, LatencyReport latency) =>
        Store("latencies", key, JsonSerializer.Serialize(latency, ScreeningJson.Readable.LatencyReport));

    private T? Find<T>(string table, string key, System.Text.Json.Serialization.Metadata.JsonTypeInfo<T> type) where T : class
    {
        string? payload;
        lock (_lock)
        {
            if (_connection is null) return null;
            try
            {
                using var command = _connection.CreateCommand();
                command.CommandText = $"SELECT payload FROM {table} WHERE key = $key;";
                command.Parameters.AddWithValue("$key", key);
                payload = command.ExecuteScalar() as string;
            }
            catch (SqliteException e)
            {
                GiveUp("cannot be read", e);
                return null;
            }
        }
        if (payload is null) return null;
        try { return JsonSerializer.Deserialize(payload, type); }
        catch (JsonException) { return null; } // an entry from an incompatible version: recompute
    }

    private void Store(string table, string key, string payload)
    {
        lock (_lock)
        {
            if (_connection is null || !_writable) return;
            try
            {
                using var command = _connection.CreateCommand();
                command.CommandText = $"INSERT OR REPLACE INTO {table} (key, payload) VALUES ($key, $payload);";
                command.Parameters.AddWithValue("$key", key);
                command.Parameters.AddWithValue("$payload", payload);
                command.ExecuteNonQuery();
            }
            catch (SqliteException e) when (e.SqliteErrorCode is 13 or 8 or 10) // SQLITE_FULL, SQLITE_READONLY, SQLITE_IOERR
            {
                // Reading may still work (e.g. a full disk): keep answering, stop storing.
                _writable = false;
                _warn($"the cache {_path} cannot be written ({OneLine(e.Message)}); this run goes on without storing results in it");
            }
            catch (SqliteException e)
            {
                GiveUp("cannot be written", e);
            }
        }
    }

    private void GiveUp(string what, Exception e)
    {
        var connection = _connection;
        _connection = null;
        try { connection?.Dispose(); } catch (SqliteException) { }
        _warn($"the cache {_path} {what} ({OneLine(e.Message)}); this run goes on without the cache. " +
              "If the file is damaged, delete it (and its -wal and -shm files) to start a new one, or use --cache PATH or --no-cache");
    }

    private static string OneLine(string text) => text.ReplaceLineEndings(" ").Trim();

    public void Dispose()
    {
        lock (_lock)
        {
            try { _connection?.Dispose(); } catch (SqliteException) { }
            _connection = null;
        }
    }
}
