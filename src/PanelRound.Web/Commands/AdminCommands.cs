using Microsoft.AspNetCore.Identity;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Demo;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Commands;

/// <summary>
/// Administrative commands through the app's own entry point:
/// <c>dotnet run --project src/PanelRound.Web -- COMMAND [options]</c>. Each migrates the
/// configured database first, as the app does at start.
/// </summary>
public static class AdminCommands
{
    public static readonly IReadOnlySet<string> Names = new HashSet<string>(StringComparer.Ordinal)
    {
        "migrate", "create-admin", "create-api-key", "demo-generate",
    };

    /// <summary>The command named by the first argument, or null when the app should serve.</summary>
    public static string? CommandOf(string[] args) => args.Length > 0 && Names.Contains(args[0]) ? args[0] : null;

    /// <summary>The arguments left for the configuration system (the command name removed).</summary>
    public static string[] ConfigArgs(string[] args) => CommandOf(args) is null ? args : args[1..];

    public static async Task<int> RunAsync(WebApplication app, string command, string[] args)
    {
        try
        {
            if (command == "demo-generate")
            {
                var outDir = DemoFiles.ResolveOut(Option(args, "--out") ?? "demo-data", app.Environment.ContentRootPath);
                var seed = int.Parse(Option(args, "--seed") ?? DemoGenerator.DefaultSeed.ToString(System.Globalization.CultureInfo.InvariantCulture), System.Globalization.CultureInfo.InvariantCulture);
                DemoGenerator.Generate(seed).Write(outDir);
                Console.WriteLine($"Demo scenario written to {Path.GetFullPath(outDir)} (seed {seed}).");
                return 0;
            }
            await MigrateAsync(app.Services);
            return command switch
            {
                "migrate" => Report("Database migrated."),
                "create-admin" => await CreateAdminAsync(app.Services, args),
                "create-api-key" => await CreateApiKeyAsync(app.Services, args),
                _ => 2,
            };
        }
        catch (CommandException e)
        {
            await Console.Error.WriteLineAsync(e.Message);
            return 2;
        }
    }

    private static int Report(string message)
    {
        Console.WriteLine(message);
        return 0;
    }

    private static async Task MigrateAsync(IServiceProvider services)
    {
        using var scope = services.CreateScope();
        await scope.ServiceProvider.GetRequiredService<PanelRoundDbContext>().Database.MigrateAsync();
    }

    private static async Task<int> CreateAdminAsync(IServiceProvider services, string[] args)
    {
        var email = Option(args, "--email") ?? throw new CommandException("create-admin needs --email ADDRESS.");
        var name = Option(args, "--name") ?? email;
        string password;
        var generated = false;
        if (args.Contains("--password-stdin"))
        {
            password = (await Console.In.ReadLineAsync())?.Trim() ?? "";
        }
        else if (!Console.IsInputRedirected)
        {
            Console.Write("Password (at least 12 characters; leave empty to generate one): ");
            password = ReadHidden();
        }
        else
        {
            password = "";
        }
        if (password.Length == 0)
        {
            password = Secrets.NewPassword();
            generated = true;
        }

        using var scope = services.CreateScope();
        var users = scope.ServiceProvider.GetRequiredService<UserManager<StaffUser>>();
        await StaffAccounts.EnsureRolesAsync(scope.ServiceProvider);
        var result = await StaffAccounts.CreateAsync(users, email, name, password, [Roles.Administrator]);
        if (!result.Succeeded)
        {
            throw new CommandException("create-admin failed: " + string.Join(" ", result.Errors.Select(e => e.Description)));
        }
        var db = scope.ServiceProvider.GetRequiredService<PanelRoundDbContext>();
        Audit.Record(db, "command:create-admin", "staff.created", "StaffUser", email, details: new { roles = new[] { Roles.Administrator } });
        await db.SaveChangesAsync();
        Console.WriteLine($"Administrator {email} created.");
        if (generated)
        {
            Console.WriteLine($"Generated password (shown once): {password}");
        }
        return 0;
    }

    private static async Task<int> CreateApiKeyAsync(IServiceProvider services, string[] args)
    {
        var name = Option(args, "--name") ?? throw new CommandException("create-api-key needs --name NAME.");
        var role = Option(args, "--role") ?? throw new CommandException("create-api-key needs --role ROLE (Facilitator, Reviewer or Administrator).");
        role = Roles.All.FirstOrDefault(r => string.Equals(r, role, StringComparison.OrdinalIgnoreCase))
            ?? throw new CommandException($"Unknown role '{role}': use Facilitator, Reviewer or Administrator.");
        using var scope = services.CreateScope();
        var db = scope.ServiceProvider.GetRequiredService<PanelRoundDbContext>();
        var key = await ApiKeys.CreateAsync(db, name, role, "command:create-api-key");
        Console.WriteLine($"API key '{name}' with role {role} (shown once; only its hash is stored):");
        Console.WriteLine(key);
        return 0;
    }

    private static string? Option(string[] args, string name)
    {
        var i = Array.IndexOf(args, name);
        return i >= 0 && i + 1 < args.Length ? args[i + 1] : null;
    }

    private static string ReadHidden()
    {
        var chars = new List<char>();
        while (true)
        {
            var k = Console.ReadKey(intercept: true);
            if (k.Key == ConsoleKey.Enter)
            {
                Console.WriteLine();
                return new string([.. chars]);
            }
            if (k.Key == ConsoleKey.Backspace)
            {
                if (chars.Count > 0)
                {
                    chars.RemoveAt(chars.Count - 1);
                }
            }
            else
            {
                chars.Add(k.KeyChar);
            }
        }
    }

    private sealed class CommandException(string message) : Exception(message);
}
