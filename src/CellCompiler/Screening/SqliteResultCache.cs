using System.Text.Json;
using CellCompiler.Runtime;
using Microsoft.Data.Sqlite;

namespace CellCompiler.Screening;

/// <summary>
/// The result cache in one SQLite file. Write-ahead logging and a busy timeout let several
/// processes (parallel shards on one machine) read and write the same file; within a process,
/// one connection is shared under a lock (every operation is a single short statement).
/// </summary>
public sealed class SqliteResultCache : IResultCache, IDisposable
{
    private readonly SqliteConnection _connection;
    private readonly Lock _lock = new();

    public SqliteResultCache(string path)
    {
        var folder = System.IO.Path.GetDirectoryName(System.IO.Path.GetFullPath(path));
        if (folder is not null) Directory.CreateDirectory(folder);
        _connection = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = path, Pooling = false }.ToString());
        _connection.Open();
        Execute("PRAGMA busy_timeout = 60000;");
        Execute("PRAGMA journal_mode = WAL;");
        Execute("PRAGMA synchronous = NORMAL;");
        Execute("CREATE TABLE IF NOT EXISTS evaluations (key TEXT PRIMARY KEY, payload TEXT NOT NULL);");
        Execute("CREATE TABLE IF NOT EXISTS latencies (key TEXT PRIMARY KEY, payload TEXT NOT NULL);");
    }

    private void Execute(string sql)
    {
        using var command = _connection.CreateCommand();
        command.CommandText = sql;
        command.ExecuteNonQuery();
    }

    public Evaluation? FindEvaluation(string key) => Find<Evaluation>("evaluations", key);

    public void StoreEvaluation(string key, Evaluation evaluation) => Store("evaluations", key, evaluation);

    public LatencyReport? FindLatency(string key) => Find<LatencyReport>("latencies", key);

    public void StoreLatency(string key, LatencyReport latency) => Store("latencies", key, latency);

    private T? Find<T>(string table, string key) where T : class
    {
        string? payload;
        lock (_lock)
        {
            using var command = _connection.CreateCommand();
            command.CommandText = $"SELECT payload FROM {table} WHERE key = $key;";
            command.Parameters.AddWithValue("$key", key);
            payload = command.ExecuteScalar() as string;
        }
        if (payload is null) return null;
        try { return JsonSerializer.Deserialize<T>(payload); }
        catch (JsonException) { return null; } // an entry from an incompatible version: recompute
    }

    private void Store<T>(string table, string key, T value)
    {
        var payload = JsonSerializer.Serialize(value);
        lock (_lock)
        {
            using var command = _connection.CreateCommand();
            command.CommandText = $"INSERT OR REPLACE INTO {table} (key, payload) VALUES ($key, $payload);";
            command.Parameters.AddWithValue("$key", key);
            command.Parameters.AddWithValue("$payload", payload);
            command.ExecuteNonQuery();
        }
    }

    public void Dispose() => _connection.Dispose();
}
