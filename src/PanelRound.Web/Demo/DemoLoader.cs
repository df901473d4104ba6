using Microsoft.AspNetCore.Identity;
using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Relations;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Demo;

/// <summary>
/// Loads the demo scenario from demo-data/ into an empty database, through the same round
/// closing and publishing code the app uses, and prints the demo sign-ins. The scenario is first
/// moved to the app's today (<see cref="DemoScenario.AsOf"/>), so that it agrees with the clock.
/// </summary>
public sealed class DemoLoader(PanelRoundDbContext db, UserManager<StaffUser> users, IServiceProvider services, ILogger<DemoLoader> log, TimeProvider clock)
{
    /// <summary>The demo panels' time zone: invitations and reminders give each deadline in UTC and in it.</summary>
    public const string DemoTimeZone = "Europe/London";

    /// <summary>Loads the scenario when the database has no indicators and no staff; returns whether it loaded.</summary>
    public async Task<bool> LoadIfEmptyAsync(string contentRoot, DemoOptions options)
    {
        if (await db.Indicators.AnyAsync() || await db.Users.AnyAsync())
        {
            return false;
        }
        var folder = options.Folder ?? DemoFiles.FindFolder(contentRoot)
            ?? throw new InvalidOperationException("Demo:Enabled is true but no demo-data folder was found; set Demo:Folder.");
        await LoadAsync(DemoScenario.Read(folder));
        log.LogInformation("Demo scenario loaded from {Folder}.", folder);
        return true;
    }

    /// <summary>Loads the scenario as of the app's today (shifted, not filtered; see <see cref="DemoScenario.AsOf"/>).</summary>
    public async Task LoadAsync(DemoScenario written)
    {
        var now = clock.GetUtcNow().UtcDateTime;
        var today = DateOnly.FromDateTime(now);
        var scenario = written.AsOf(now);
        await StaffAccounts.EnsureRolesAsync(services);
        foreach (var s in scenario.Staff)
        {
            var created = await StaffAccounts.CreateAsync(users, s.Email, s.Name, s.Password, [s.Role], now);
            if (!created.Succeeded)
            {
                throw new InvalidOperationException("Demo staff account failed: " + string.Join(" ", created.Errors.Select(e => e.Description)));
            }
        }

        var indicators = scenario.Indicators.ToDictionary(i => i.Key, i => new Indicator
        {
            Key = i.Key, Name = i.Name, UnitLabel = i.Unit, Decimals = i.Decimals, Description = i.Description, CreatedAt = now,
        });
        db.Indicators.AddRange(indicators.Values);
        foreach (var o in scenario.Observations)
        {
            var period = Period.Parse(o.Period);
            // The observatory publishes a period's figure about six weeks after it ends (15 February for a year).
            var observedOn = period.EndDate.AddDays(46);
            if (observedOn > today)
            {
                throw new InvalidOperationException(
                    $"Demo: {o.Indicator} {o.Period} would be known on {observedOn:yyyy-MM-dd}, after today ({today:yyyy-MM-dd}); the demo files lost their margin around their anchor date.");
            }
            indicators[o.Indicator].Observations.Add(new Observation
            {
                Period = period.ToString(), PeriodSortKey = period.SortKey, Value = o.Value, Source = o.Source,
                ObservedOn = observedOn, RecordedAt = now, RecordedBy = "demo",
            });
        }
        var experts = scenario.Experts.ToDictionary(e => e.Key, e => new Expert
        {
            Name = e.Name, Email = e.Email, Affiliation = e.Affiliation, Expertise = e.Expertise,
            DeclaredInterests = e.DeclaredInterests, ExternalKey = e.Key, CreatedAt = now,
        });
        db.Experts.AddRange(experts.Values);
        await db.SaveChangesAsync();

        foreach (var p in scenario.Panels)
        {
            var panel = new Panel
            {
                Title = p.Title, Brief = p.Brief, StartsOn = p.StartsOn, TargetPeriods = p.TargetPeriods,
                State = PanelState.Running, CreatedAt = p.StartsOn.ToDateTime(TimeOnly.MinValue, DateTimeKind.Utc).AddDays(-14),
                CreatedBy = scenario.Staff[0].Email, ExternalKey = p.Key, Version = Guid.NewGuid(),
                // The invented research desk experts write to; deadlines also in the desk's (real) time zone.
                TimeZone = DemoTimeZone, ContactName = "Calderport research desk", ContactEmail = "research@calderport-demo.example",
            };
            var order = 0;
            foreach (var q in p.Questions)
            {
                panel.Questions.Add(new Question
                {
                    IndicatorId = indicators[q.Indicator].Id, Order = ++order, Label = q.Label, HelpText = q.Help,
                    Format = Enum.Parse<ResponseFormat>(q.Format), HardMin = q.HardMin, HardMax = q.HardMax,
                    PlausibleMin = q.PlausibleMin, PlausibleMax = q.PlausibleMax, TargetPeriods = q.CalibrationPeriod ?? p.TargetPeriods,
                    IsCalibration = q.CalibrationPeriod is not null, TrueValue = q.TrueValue, LogScale = q.LogScale == true,
                    TrueValueRecordedAt = q.TrueValue is null ? null : now,
                });
            }
            var members = new Dictionary<string, PanelMembership>();
            foreach (var m in p.Members)
            {
                var membership = new PanelMembership
                {
                    ExpertId = experts[m.Expert].Id, PanelCode = m.PanelCode, TokenHash = Secrets.Hash(m.Token),
                    TokenIssuedAt = panel.CreatedAt, State = MembershipState.Active, CreatedAt = panel.CreatedAt,
                };
                panel.Memberships.Add(membership);
                members[m.Expert] = membership;
            }
            foreach (var r in p.Rounds)
            {
                panel.Rounds.Add(new Round { Number = r.Number, State = RoundState.Open, OpensAt = r.OpensAt, ClosesAt = r.ClosesAt });
            }
            db.Panels.Add(panel);
            await db.SaveChangesAsync();

            var questionByIndicator = panel.Questions.ToDictionary(q => scenario.Indicators.Single(i => indicators[i.Key].Id == q.IndicatorId).Key);
            var roundByNumber = panel.Rounds.ToDictionary(r => r.Number);
            foreach (var e in scenario.Estimates.Where(e => e.Panel == p.Key))
            {
                db.Estimates.Add(new Estimate
                {
                    RoundId = roundByNumber[e.Round].Id, MembershipId = members[e.Expert].Id, QuestionId = questionByIndicator[e.Indicator].Id,
                    Period = e.Period, Value = e.Value, P10 = e.P10, P50 = e.P50, P90 = e.P90, Confidence = e.Confidence,
                    Rationale = string.IsNullOrEmpty(e.Rationale) ? null : e.Rationale, CreatedAt = e.SubmittedAt,
                });
            }
            Audit.Record(db, "demo", "panel.created", "Panel", panel.Id, panel.Id, new { panel.Title }, panel.CreatedAt);
            await db.SaveChangesAsync();
            // Relations through the app's own use case: its rules and its audit event.
            var relations = services.GetRequiredService<PanelRelations>();
            RelationTermInput Term(DemoRelationTerm t) => new(questionByIndicator[t.Indicator].Id, t.Label, null, t.Factor);
            foreach (var r in p.Relations ?? [])
            {
                var declared = await relations.AddAsync(panel.Id, new RelationInput(r.Shape, Term(r.Result), Term(r.First), Term(r.Second)), "demo");
                if (!declared.IsOk)
                {
                    throw new InvalidOperationException($"Demo: the relation of {p.Key} was refused: {declared.Message} {string.Join(" ", declared.Errors.SelectMany(e => e.Value))}");
                }
            }
            await DemoRoundReplay.ReplayAsync(services, panel, p);
        }
        Audit.Record(db, "demo", "demo.loaded", "Database", "demo", details: new { panels = scenario.Panels.Count, estimates = scenario.Estimates.Count }, at: now);
        await db.SaveChangesAsync();
    }

    /// <summary>Prints the demo sign-ins and a few expert links of the open round.</summary>
    public static void PrintSignIns(string baseUrl, IServiceProvider services)
    {
        var options = services.GetRequiredService<Microsoft.Extensions.Options.IOptions<DemoOptions>>().Value;
        var env = services.GetRequiredService<IWebHostEnvironment>();
        var folder = options.Folder ?? DemoFiles.FindFolder(env.ContentRootPath);
        if (folder is null)
        {
            return;
        }
        var scenario = DemoScenario.Read(folder).AsOf(services.GetRequiredService<TimeProvider>().GetUtcNow().UtcDateTime);
        Console.WriteLine();
        Console.WriteLine("Demo staff sign-ins (demo only; never use these passwords elsewhere):");
        foreach (var s in scenario.Staff)
        {
            Console.WriteLine($"  {s.Role,-14} {s.Email,-40} {s.Password}");
        }
        var open = scenario.Panels.FirstOrDefault(p => !p.Concluded);
        if (open is not null)
        {
            var lastRound = open.Rounds.Max(r => r.Number);
            var answered = scenario.Estimates.Where(e => e.Panel == open.Key && e.Round == lastRound).Select(e => e.Expert).ToHashSet();
            Console.WriteLine($"Demo expert links for '{open.Title}' (round {lastRound} is open; these experts have not answered it yet):");
            foreach (var m in open.Members.Where(m => !answered.Contains(m.Expert)).Take(3))
            {
                Console.WriteLine($"  {m.PanelCode}  {baseUrl.TrimEnd('/')}/e/{m.Token}");
            }
        }
        Console.WriteLine("Forecasts shown by PanelRound are forecasts, not valuations or investment advice.");
        Console.WriteLine();
    }
}
