using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Answers;

/// <summary>
/// Idempotent submissions: the optional <c>Idempotency-Key</c> header of the expert API (and the
/// expert page's form key). The key is scoped to the membership and kept as a hash beside the
/// receipt it produced; a retry with the same key and the same answers gets that receipt back,
/// the same key with other answers is refused as bad input.
/// </summary>
public static class SubmissionKeys
{
    /// <summary>The request header (the name used by the HTTP working group's draft on idempotency keys).</summary>
    public const string Header = "Idempotency-Key";

    /// <summary>The longest key accepted.</summary>
    public const int MaxLength = 255;

    public readonly record struct Fingerprints(string KeyHash, string RequestHash);

    /// <summary>Checks a key as sent: printable ASCII, 1 to <see cref="MaxLength"/> characters; null when it is valid.</summary>
    public static string? Problem(string key) =>
        key.Length is 0 or > MaxLength || key.Any(c => c is < ' ' or > '~')
            ? $"An idempotency key is 1 to {MaxLength} printable ASCII characters (a UUID, for example)."
            : null;

    public static Fingerprints Fingerprint(string key, SubmissionInput input) =>
        new(Sha256(key), Sha256(JsonSerializer.Serialize(input)));

    public static SubmissionKey Record(int membershipId, Fingerprints key, SubmissionReceipt receipt) => new()
    {
        MembershipId = membershipId, KeyHash = key.KeyHash, RequestHash = key.RequestHash, RoundNumber = receipt.Round,
        Saved = receipt.Saved, IsDraft = receipt.Draft, WarningsJson = JsonSerializer.Serialize(receipt.Warnings), CreatedAt = receipt.At,
    };

    /// <summary>The earlier call's receipt for this key, a refusal when the key came with other answers, or null for a new key.</summary>
    public static async Task<Result<SubmissionReceipt>?> ReplayAsync(PanelRoundDbContext db, int membershipId, Fingerprints key)
    {
        var earlier = await db.SubmissionKeys.AsNoTracking().SingleOrDefaultAsync(k => k.MembershipId == membershipId && k.KeyHash == key.KeyHash);
        if (earlier is null)
        {
            return null;
        }
        if (earlier.RequestHash != key.RequestHash)
        {
            var errors = new FieldErrors();
            errors.Add(Header, "This idempotency key was already used for a different submission; send a new key with new answers.");
            return Result<SubmissionReceipt>.Invalid(errors);
        }
        var warnings = JsonSerializer.Deserialize<List<string>>(earlier.WarningsJson) ?? [];
        return Result<SubmissionReceipt>.Ok(new SubmissionReceipt(earlier.RoundNumber, earlier.Saved, earlier.IsDraft, earlier.CreatedAt, warnings, Replayed: true));
    }

    private static string Sha256(string text) => Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(text)));
}
