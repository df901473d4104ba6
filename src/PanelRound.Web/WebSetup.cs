using System.Text.Json.Serialization;
using PanelRound.Data;
using PanelRound.Web.Demo;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web;

/// <summary>The web host's services and pipeline, so that Program.cs reads as a table of contents.</summary>
public static class WebSetup
{
    public static IHostApplicationBuilder AddPanelRoundWeb(this IHostApplicationBuilder builder)
    {
        // Numbers in forms, CSV and the API are invariant (a dot for decimals), whatever the server's locale.
        System.Globalization.CultureInfo.DefaultThreadCurrentCulture = System.Globalization.CultureInfo.InvariantCulture;
        System.Globalization.CultureInfo.DefaultThreadCurrentUICulture = System.Globalization.CultureInfo.InvariantCulture;
        var services = builder.Services;
        services.AddSingleton(TimeProvider.System);
        // Enums are their names in every JSON answer (the API reads names too, e.g. "TukeyFences").
        services.ConfigureHttpJsonOptions(o => o.SerializerOptions.Converters.Add(new JsonStringEnumConverter()));
        services.AddProblemDetails();
        services.AddBadRequestProblems();
        services.AddStrictJsonNumbers();
        services.AddOpenApi();
        services.AddRazorPages(o =>
        {
            o.Conventions.ConfigureFilter(new UnknownHandlerFilter());
            o.Conventions.AuthorizeFolder("/Staff", AuthSetup.StaffPolicy);
            o.Conventions.AuthorizeFolder("/Admin", AuthSetup.AdministratorPolicy);
            o.Conventions.RequireWritePolicies("/Staff", "/Admin");
        });
        services.AddOptions<DemoOptions>().BindConfiguration(DemoOptions.Section).ValidateOnStart();
        services.AddOptions<MailOptions>().BindConfiguration(MailOptions.Section).ValidateOnStart();
        services.AddSingleton<IMailer, Mailer>();
        return builder;
    }

    /// <summary>Refuses the demo in Production, migrates where configured, then loads the demo scenario into an empty database when the demo is on.</summary>
    public static async Task PrepareDatabaseAsync(this WebApplication app)
    {
        var demo = app.Services.GetRequiredService<Microsoft.Extensions.Options.IOptions<DemoOptions>>().Value;
        if (demo.Enabled && app.Environment.IsProduction())
        {
            // The demo's personal-link tokens and staff passwords are committed to the repository: public.
            throw new InvalidOperationException("Demo:Enabled is refused in Production: the demo's links and passwords are public. "
                + "Run the demo in another environment (e.g. ASPNETCORE_ENVIRONMENT=Staging).");
        }
        await DatabaseSetup.PrepareAsync(app.Services);
        if (demo.Enabled)
        {
            using var scope = app.Services.CreateScope();
            var loader = ActivatorUtilities.CreateInstance<DemoLoader>(scope.ServiceProvider);
            await loader.LoadIfEmptyAsync(app.Environment.ContentRootPath, demo);
        }
        app.Lifetime.ApplicationStarted.Register(() =>
        {
            var provider = app.Services.GetRequiredService<DatabaseOptions>().Provider;
            Console.WriteLine($"PanelRound is serving on {string.Join(", ", app.Urls)} (database: {provider}).");
            if (demo.Enabled)
            {
                DemoLoader.PrintSignIns(app.Urls.First(), app.Services);
            }
        });
    }

    public static WebApplication UsePanelRoundPipeline(this WebApplication app)
    {
        app.UsePanelRoundHardening();
        // API callers get ProblemDetails for unexpected errors; people get the error page.
        app.UseWhen(ctx => ctx.Request.Path.StartsWithSegments("/api"), api => api.UseExceptionHandler());
        if (!app.Environment.IsDevelopment())
        {
            app.UseWhen(ctx => !ctx.Request.Path.StartsWithSegments("/api"), pages => pages.UseExceptionHandler("/Error"));
        }
        app.UseStatusCodePages();
        app.UseRateLimiter();
        app.UseStaticFiles();
        app.UseRouting();
        app.UseAuthentication();
        app.UseMiddleware<CookieApiGuard>();
        app.UseAuthorization();
        app.MapOpenApi("/openapi/{documentName}.json");
        return app;
    }
}
