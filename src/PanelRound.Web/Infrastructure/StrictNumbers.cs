using System.Text.Json;
using System.Text.Json.Serialization;
using PanelRound.Core.Domain;

namespace PanelRound.Web.Infrastructure;

/// <summary>
/// Reads every JSON number of the API by the one rule for machine-written numbers
/// (<see cref="Numbers.TryParseInvariant"/>): a value that would underflow to 0 (1e-400) or overflow
/// (1e309) is a 400 naming the field, never silently another number; a value beyond ±1e12 is left
/// to the use case's validation, which names the field in the input's own terms. Strings holding numbers
/// are read by the same rule (so "1,5" is refused, not read as 15).
/// </summary>
public sealed class StrictDoubleConverter : JsonConverter<double>
{
    public override double Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options)
    {
        if (reader.TokenType is not (JsonTokenType.Number or JsonTokenType.String))
        {
            throw new JsonException("Expected a number.");
        }
        var text = reader.TokenType == JsonTokenType.String ? reader.GetString() : System.Text.Encoding.UTF8.GetString(reader.HasValueSequence ? System.Buffers.BuffersExtensions.ToArray(reader.ValueSequence) : reader.ValueSpan);
        var reading = Numbers.TryParseInvariant(text);
        if (reading.IsValid)
        {
            return reading.Value;
        }
        // A representable value beyond ±1e12 passes through: the use case's validation refuses it
        // with the field's own name. What cannot be stored as written (1e-400, 1e309) stops here.
        if (double.TryParse(text, System.Globalization.NumberStyles.Float, System.Globalization.CultureInfo.InvariantCulture, out var value) && double.IsNormal(value))
        {
            return value;
        }
        throw new JsonException(reading.Error);
    }

    public override void Write(Utf8JsonWriter writer, double value, JsonSerializerOptions options) => writer.WriteNumberValue(value);
}

/// <summary>
/// Reads every JSON text of the API, refusing one that holds a NUL character (U+0000): it is not
/// text, and PostgreSQL cannot store it or even compare with it, so it would reach a query as a 500.
/// Other control characters are left to the use case's validation (<see cref="FieldErrors"/>), which names the field.
/// </summary>
public sealed class StrictStringConverter : JsonConverter<string>
{
    public override string? Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options)
    {
        if (reader.TokenType != JsonTokenType.String)
        {
            throw new JsonException("Expected a text.");
        }
        var text = reader.GetString();
        return text is not null && text.Contains('\0', StringComparison.Ordinal) ? throw new JsonException("A text holds a NUL character (U+0000).") : text;
    }

    public override void Write(Utf8JsonWriter writer, string value, JsonSerializerOptions options) => writer.WriteStringValue(value);
}

public static class StrictNumbersSetup
{
    /// <summary>Adds <see cref="StrictDoubleConverter"/> (nullable doubles use it too) and <see cref="StrictStringConverter"/> to the minimal API's JSON options.</summary>
    public static IServiceCollection AddStrictJsonNumbers(this IServiceCollection services) =>
        services.ConfigureHttpJsonOptions(o =>
        {
            o.SerializerOptions.Converters.Add(new StrictDoubleConverter());
            o.SerializerOptions.Converters.Add(new StrictStringConverter());
        });
}
