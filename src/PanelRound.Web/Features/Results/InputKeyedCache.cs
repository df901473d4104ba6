using System.Collections.Concurrent;

namespace PanelRound.Web.Features.Results;

/// <summary>
/// The results of a pure, costly computation (benchmark fits, the classical model of the calibration
/// questions) kept by a text key that spells out every input, so that a page viewed again computes
/// nothing again.
/// </summary>
/// <remarks>
/// Implementation note: the key is the whole input, not an id, so an entry can never be stale, and
/// nothing here is state another instance needs (each computes its own). At most
/// <paramref name="capacity"/> entries: the cache is emptied when it is full. Values are shared
/// between requests and must not be changed by callers.
/// </remarks>
/// <param name="capacity">The most entries kept.</param>
internal sealed class InputKeyedCache<T>(int capacity)
    where T : class
{
    private readonly ConcurrentDictionary<string, T> _entries = new(StringComparer.Ordinal);

    /// <summary>The value computed for the key before, else computes it now (two requests may both compute it; either result is the same).</summary>
    public T GetOrAdd(string key, Func<T> compute)
    {
        if (_entries.TryGetValue(key, out var hit))
        {
            return hit;
        }
        var value = compute();
        if (_entries.Count >= capacity)
        {
            _entries.Clear();
        }
        _entries.TryAdd(key, value);
        return value;
    }

    /// <summary>The value stored for the key before, else null.</summary>
    public T? Find(string key) => _entries.TryGetValue(key, out var hit) ? hit : null;

    /// <summary>Keeps a value computed elsewhere under its key.</summary>
    public void Add(string key, T value)
    {
        if (_entries.Count >= capacity)
        {
            _entries.Clear();
        }
        _entries[key] = value;
    }
}
