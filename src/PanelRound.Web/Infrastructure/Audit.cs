using System.Security.Claims;
using System.Text.Json;
using System.Text.Json.Serialization;
using PanelRound.Data;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Infrastructure;

/// <summary>
/// Adds audit events to the same unit of work as the change they describe, so the event and
/// the change are saved (or lost) together.
/// </summary>
public static class Audit
{
    /// <summary>Details as JSON, enums by name as in the API.</summary>
    private static readonly JsonSerializerOptions DetailsJson = new() { Converters = { new JsonStringEnumConverter() } };

    public static void Record(PanelRoundDbContext db, string actor, string action, string entityType, object entityId,
        int? panelId = null, object? details = null, DateTime? at = null)
    {
        db.AuditEvents.Add(new AuditEvent
        {
            At = at ?? DateTime.UtcNow,
            Actor = actor,
            Action = action,
            EntityType = entityType,
            EntityId = Convert.ToString(entityId, System.Globalization.CultureInfo.InvariantCulture) ?? "",
            PanelId = panelId,
            Details = details is null ? null : JsonSerializer.Serialize(details, DetailsJson),
        });
    }

    /// <summary>The actor name of a signed-in principal: the staff email or the API key's name.</summary>
    public static string ActorOf(ClaimsPrincipal user) =>
        user.FindFirstValue(ClaimTypes.Email) ?? user.Identity?.Name ?? "anonymous";
}
