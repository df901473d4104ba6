using MailKit.Net.Smtp;
using MailKit.Security;
using Microsoft.Extensions.Options;
using MimeKit;

namespace PanelRound.Web.Application;

public sealed record MailMessageData(string ToAddress, string ToName, string Subject, string Body);

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
public sealed class Mailer(IOptions<MailOptions> options, IWebHostEnvironment env, ILogger<Mailer> log) : IMailer
{
    public async Task SendAsync(MailMessageData message, CancellationToken ct = default)
    {
        var o = options.Value;
        var mime = new MimeMessage();
        mime.From.Add(MailboxAddress.Parse(o.From));
        mime.To.Add(new MailboxAddress(message.ToName, message.ToAddress));
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
