using System.Text.RegularExpressions;
using MailKit.Net.Smtp;
using MailKit.Security;
using Microsoft.Extensions.Options;
using MimeKit;

namespace PanelRound.Web.Infrastructure;

public sealed record MailMessageData(string ToAddress, string ToName, string Subject, string Body);

/// <summary>
/// Email addresses as the mailer reads them, so that the roster accepts exactly the addresses that
/// mail can be sent to.
/// </summary>
public static partial class MailAddresses
{
    private static readonly ParserOptions Strict = new()
    {
        AddressParserComplianceMode = RfcComplianceMode.Strict,
        AllowAddressesWithoutDomain = false,
        AllowUnquotedCommasInAddresses = false,
    };

    /// <summary>
    /// The mailbox the mailer sends to, or null when the text is not one plain address: it has the
    /// shape <c>local@domain.tld</c> (no spaces, one @) and MimeKit parses it, with strict options, as
    /// a single mailbox whose address is the text itself (no display name, no list).
    /// </summary>
    public static MailboxAddress? ToMailbox(string? address, string? name = null)
    {
        if (address is null || !SimpleShape().IsMatch(address)
            || !MailboxAddress.TryParse(Strict, address, out var mailbox) || !string.Equals(mailbox.Address, address, StringComparison.Ordinal))
        {
            return null;
        }
        mailbox.Name = name;
        return mailbox;
    }

    public static bool IsValid(string? address) => ToMailbox(address) is not null;

    [GeneratedRegex(@"^[^@\s]+@[^@\s]+\.[^@\s]+$")]
    private static partial Regex SimpleShape();
}

/// <summary>Sends the panel's messages (invitations with personal links, reminders).</summary>
public interface IMailer
{
    Task SendAsync(MailMessageData message, CancellationToken ct = default);
}

/// <summary>The <c>Mail</c> configuration section.</summary>
public sealed class MailOptions
{
    public const string Section = "Mail";

    /// <summary><c>Mail:SmtpHost</c>: when empty, messages go to the outbox folder instead.</summary>
    public string? SmtpHost { get; set; }

    public int SmtpPort { get; set; } = 587;

    public string? SmtpUser { get; set; }

    public string? SmtpPassword { get; set; }

    /// <summary>STARTTLS required (the default), or none for a relay on the same host.</summary>
    public bool UseStartTls { get; set; } = true;

    public string From { get; set; } = "panelround@localhost";

    /// <summary><c>Mail:OutboxFolder</c>: where messages are written as .eml files without SMTP; relative to the content root.</summary>
    public string OutboxFolder { get; set; } = "App_Data/outbox";
}

/// <summary>MailKit over SMTP when configured, otherwise .eml files in the outbox folder.</summary>
public sealed class Mailer(IOptions<MailOptions> options, IWebHostEnvironment env, IHostApplicationLifetime lifetime, ILogger<Mailer> log) : IMailer
{
    /// <summary>Sends one message; a send still running when the host shuts down is cancelled.</summary>
    public async Task SendAsync(MailMessageData message, CancellationToken ct = default)
    {
        using var stopping = CancellationTokenSource.CreateLinkedTokenSource(ct, lifetime.ApplicationStopping);
        ct = stopping.Token;
        var o = options.Value;
        var mime = new MimeMessage();
        mime.From.Add(MailboxAddress.Parse(o.From));
        mime.To.Add(MailAddresses.ToMailbox(message.ToAddress, message.ToName)
            ?? throw new ArgumentException("The recipient's address is not one the mailer can parse (a single address such as name@firm.example).", nameof(message)));
        mime.Subject = message.Subject;
        mime.Body = new TextPart("plain") { Text = message.Body };
        if (string.IsNullOrWhiteSpace(o.SmtpHost))
        {
            var folder = Path.IsPathRooted(o.OutboxFolder) ? o.OutboxFolder : Path.Combine(env.ContentRootPath, o.OutboxFolder);
            Directory.CreateDirectory(folder);
            var file = Path.Combine(folder, $"{DateTime.UtcNow:yyyyMMddTHHmmssfff}-{Guid.NewGuid():N}.eml");
            await mime.WriteToAsync(file, ct);
            log.LogInformation("Mail to {Count} recipient written to the outbox {Folder}.", 1, folder);
            return;
        }
        using var smtp = new SmtpClient();
        await smtp.ConnectAsync(o.SmtpHost, o.SmtpPort, o.UseStartTls ? SecureSocketOptions.StartTls : SecureSocketOptions.None, ct);
        if (!string.IsNullOrEmpty(o.SmtpUser))
        {
            await smtp.AuthenticateAsync(o.SmtpUser, o.SmtpPassword ?? "", ct);
        }
        await smtp.SendAsync(mime, ct);
        await smtp.DisconnectAsync(true, ct);
    }
}
