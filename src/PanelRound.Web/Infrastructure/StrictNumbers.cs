using System.Text.Json;
using System.Text.Json.Serialization;
using PanelRound.Core.Domain;

namespace PanelRound.Web.Infrastructure;

/// <summary>
/// Reads every JSON number of the API by the one rule for machine-written numbers
/// (<see cref="Numbers.TryParseInvariant"/>): a value that would underflow to 0 (1e-400), overflow or
/// exceed ±1e12 is a 400 naming the field, never silently another number. Strings holding numbers
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
        return reading.IsValid ? reading.Value : throw new JsonException(reading.Error);
    }

    public override void Write(Utf8JsonWriter writer, double value, JsonSerializerOptions options) => writer.WriteNumberValue(value);
}

public static class StrictNumbersSetup
{
    /// <summary>Adds <see cref="StrictDoubleConverter"/> to the minimal API's JSON options (nullable doubles use it too).</summary>
    public static IServiceCollection AddStrictJsonNumbers(this IServiceCollection services) =>
        services.ConfigureHttpJsonOptions(o => o.SerializerOptions.Converters.Add(new StrictDoubleConverter()));
}
