using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Roster;

public sealed record ExpertInput(string? Name, string? Email, string? Affiliation, string? Expertise, string? DeclaredInterests, string? ExternalKey = null);

/// <summary>The firm's roster of experts, reused across panels (experts have no account).</summary>
public sealed class ExpertRoster(PanelRoundDbContext db, TimeProvider clock)
{
    private DateTime Now => clock.GetUtcNow().UtcDateTime;

    public async Task<Result<Expert>> CreateExpertAsync(ExpertInput input, string actor)
    {
        var errors = new FieldErrors();
        var name = errors.Required("name", input.Name, FieldLengths.Name, "Name");
        var email = errors.Required("email", input.Email, FieldLengths.Email, "Email").ToLowerInvariant();
        if (email.Length > 0 && !MailAddresses.IsValid(email))
        {
            errors.Add("email", "Email is not an address mail can be sent to (one address such as name@firm.example; no spaces, no doubled, leading or trailing dots).");
        }
        if (email.Length > 0 && await db.Experts.AnyAsync(e => e.Email == email))
        {
            errors.Add("email", "An expert with this email is on the roster already.");
        }
        var externalKey = errors.Optional("externalKey", input.ExternalKey, FieldLengths.ExternalKey, "External key");
        if (externalKey is not null && await db.Experts.AnyAsync(e => e.ExternalKey == externalKey))
        {
            errors.Add("externalKey", "An expert with this external key is on the roster already.");
        }
        var expert = new Expert
        {
            Name = name, Email = email,
            Affiliation = errors.Optional("affiliation", input.Affiliation, FieldLengths.Affiliation, "Affiliation"),
            Expertise = errors.Optional("expertise", input.Expertise, FieldLengths.Expertise, "Expertise"),
            DeclaredInterests = errors.Optional("declaredInterests", input.DeclaredInterests, FieldLengths.DeclaredInterests, "Declared interests"),
            ExternalKey = externalKey, CreatedAt = Now,
        };
        if (errors.Any)
        {
            return Result<Expert>.Invalid(errors);
        }
        db.Experts.Add(expert);
        await db.SaveChangesAsync();
        Audit.Record(db, actor, "expert.created", "Expert", expert.Id);
        await db.SaveChangesAsync();
        return Result<Expert>.Ok(expert);
    }
}
