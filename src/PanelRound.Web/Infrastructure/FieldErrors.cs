namespace PanelRound.Web.Infrastructure;

/// <summary>Field-level validation errors, keyed by the input's field path (e.g. <c>answers[0].periods[2].value</c>).</summary>
public sealed class FieldErrors
{
    private readonly Dictionary<string, List<string>> _errors = new(StringComparer.Ordinal);

    public bool Any => _errors.Count > 0;

    public void Add(string field, string message)
    {
        if (!_errors.TryGetValue(field, out var list))
        {
            _errors[field] = list = [];
        }
        list.Add(message);
    }

    /// <summary>Adds an error when <paramref name="text"/> is empty, longer than <paramref name="max"/> or holds a control character.</summary>
    public string Required(string field, string? text, int max, string label)
    {
        if (string.IsNullOrWhiteSpace(text))
        {
            Add(field, $"{label} is required.");
            return "";
        }
        return Checked(field, text, max, label);
    }

    /// <summary>Null for an empty text; otherwise as <see cref="Required"/>.</summary>
    public string? Optional(string field, string? text, int max, string label) =>
        string.IsNullOrWhiteSpace(text) ? null : Checked(field, text, max, label);

    private string Checked(string field, string text, int max, string label)
    {
        var trimmed = text.Trim();
        if (trimmed.Length > max)
        {
            Add(field, $"{label} is at most {max} characters.");
        }
        if (TextRules.Problem(trimmed) is { } problem)
        {
            Add(field, $"{label} {problem}");
        }
        return trimmed;
    }

    /// <summary>Adds an error when the number is not finite or beyond ±10¹² (<see cref="Core.Domain.Numbers"/>, the one limit for every number).</summary>
    public void Finite(string field, double? value, string label)
    {
        if (value is { } v && Core.Domain.Numbers.LimitError(v) is { } error)
        {
            Add(field, $"{label} {error}");
        }
    }

    public Dictionary<string, string[]> ToDictionary() => _errors.ToDictionary(e => e.Key, e => e.Value.ToArray(), StringComparer.Ordinal);
}

/// <summary>What free text may hold: no control characters except tab and line breaks, and well-formed UTF-16.</summary>
/// <remarks>
/// Implementation note: PostgreSQL refuses U+0000 in text and every database refuses a lone
/// surrogate; control characters also hide text from readers of a report. Refusing them in
/// validation keeps bad input a 400 that names the field on both providers.
/// </remarks>
public static class TextRules
{
    /// <summary>Why the text cannot be stored, or null when it can.</summary>
    public static string? Problem(string text)
    {
        for (var i = 0; i < text.Length; i++)
        {
            var c = text[i];
            if (char.IsControl(c) && c is not ('\t' or '\n' or '\r'))
            {
                return FormattableString.Invariant($"contains a control character (U+{(int)c:X4}) at position {i + 1}.");
            }
            if (char.IsHighSurrogate(c) && i + 1 < text.Length && char.IsLowSurrogate(text[i + 1]))
            {
                i++;
                continue;
            }
            if (char.IsSurrogate(c))
            {
                return FormattableString.Invariant($"contains an invalid character (a lone UTF-16 surrogate) at position {i + 1}.");
            }
        }
        return null;
    }
}
