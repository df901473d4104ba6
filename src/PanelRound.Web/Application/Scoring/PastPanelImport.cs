using System.Globalization;
using System.Text;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.Options;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Application.Scoring;

/// <summary>What an import of past panels created and changed.</summary>
public sealed record PastPanelImportResult(
    int Panels, int Questions, int Rounds, int Estimates, int Experts, int ExpertsCreated, int IndicatorsCreated,
    int ObservationsAdded, int ObservationsCorrected, int ObservationsUnchanged);

/// <summary>
/// Imports a firm's past panels so that it starts with a track record: a <c>forecasts</c> file and
/// an <c>observations</c> file (header row, comma, invariant-culture numbers, extra columns ignored),
/// all or nothing in one transaction, with a row-level error report.
/// </summary>
/// <remarks>
/// <para><c>forecasts</c>: <c>panel</c>, <c>panel_start</c> (yyyy-MM-dd), <c>indicator</c>, <c>unit</c>,
/// <c>target_period</c>, <c>expert</c>, <c>round</c>, and <c>value</c> or <c>p10</c>, <c>p50</c>, <c>p90</c>;
/// optional <c>panel_closed</c> (yyyy-MM-dd, the day the panel concluded; default its start, which
/// can only make the backtest use less history, never more). <c>observations</c>: <c>indicator</c>,
/// <c>period</c>, <c>value</c>, optional <c>source</c> and <c>observed_on</c> (the day the value became
/// known, between the period's end and today; without it, the period's end plus
/// <c>Scoring:ImportPublicationLagDays</c>, at the latest the import day, so that imported history
/// informs the backtest of later panels as it would have then). Numbers are within ±10¹².</para>
/// <para>Two imports of the same panel key at once: the unique index lets one win, and the other
/// gets a conflict with nothing imported.</para>
/// <para>Each distinct panel key becomes a concluded panel (external key = the key) with one
/// question per indicator (Point or Range by the columns filled), one membership per expert (a
/// random panel code and an unusable random token hash), its rounds closed with frozen feedback,
/// and its consensus computed from the last round with equal weights. Experts are matched by
/// external key (or by email when the key is one), else created with a placeholder email;
/// indicators by key, else created with the file's unit. Observations go through the same
/// correction rule as the catalog: a different value for a period that has one supersedes it and
/// is audited.</para>
/// </remarks>
public sealed class PastPanelImport(PanelRoundDbContext db, TimeProvider clock, ConsensusPublisher publisher, IOptions<ScoringOptions> options)
{
    /// <summary>The most row errors reported; the rest are counted.</summary>
    public const int MaxReportedErrors = 200;

    /// <summary>The columns the forecasts file must have, besides value or p10, p50 and p90.</summary>
    public static readonly IReadOnlyList<string> ForecastColumns = ["panel", "panel_start", "indicator", "unit", "target_period", "expert", "round"];

    /// <summary>The columns the observations file must have; source and observed_on are optional.</summary>
    public static readonly IReadOnlyList<string> ObservationColumns = ["indicator", "period", "value"];

    private sealed record ForecastRow(
        int Row, string Panel, DateOnly PanelStart, DateOnly? PanelClosed, string Indicator, string Unit, Period Period, string Expert, int Round,
        double? Value, double? P10, double? P50, double? P90)
    {
        public bool IsRange => P10 is not null;
    }

    private sealed record ObservationRow(int Row, string Indicator, Period Period, double Value, string? Source, DateOnly? ObservedOn, int Decimals);

    private sealed class Report
    {
        public FieldErrors Errors { get; } = new();

        public int Count { get; private set; }

        public void Add(string key, string message)
        {
            Count++;
            if (Count <= MaxReportedErrors)
            {
                Errors.Add(key, message);
            }
        }
    }

    public async Task<Outcome<PastPanelImportResult>> ImportAsync(Stream forecasts, Stream? observations, string actor)
    {
        var report = new Report();
        var forecastRows = ParseForecasts(forecasts, report);
        var today = DateOnly.FromDateTime(clock.GetUtcNow().UtcDateTime);
        var observationRows = observations is null ? [] : ParseObservations(observations, report, today, options.Value.ImportPublicationLagDays);
        if (report.Count > 0 || forecastRows is null || observationRows is null)
        {
            return Invalid(report);
        }

        // Checks against the database: panels not imported twice, units agree with known indicators.
        var panelKeys = forecastRows.Select(r => r.Panel).Distinct(StringComparer.Ordinal).ToList();
        var existingPanels = (await db.Panels.AsNoTracking().Where(p => p.ExternalKey != null && panelKeys.Contains(p.ExternalKey))
            .Select(p => p.ExternalKey!).ToListAsync()).ToHashSet(StringComparer.Ordinal);
        foreach (var first in forecastRows.GroupBy(r => r.Panel).Select(g => g.First()).Where(r => existingPanels.Contains(r.Panel)))
        {
            report.Add(RowKey("forecasts", first.Row), $"Row {first.Row} (line {first.Row + 1}): panel '{first.Panel}' exists already (imported before?); nothing was imported.");
        }
        var indicatorKeys = forecastRows.Select(r => r.Indicator).Concat(observationRows.Select(o => o.Indicator)).Distinct(StringComparer.Ordinal).ToList();
        var indicators = await db.Indicators.Where(i => indicatorKeys.Contains(i.Key)).ToDictionaryAsync(i => i.Key, StringComparer.Ordinal);
        foreach (var r in forecastRows.GroupBy(r => r.Indicator).Select(g => g.First()))
        {
            if (indicators.TryGetValue(r.Indicator, out var known) && !string.Equals(known.UnitLabel, r.Unit, StringComparison.Ordinal))
            {
                report.Add(RowKey("forecasts", r.Row), $"Row {r.Row} (line {r.Row + 1}): indicator '{r.Indicator}' is in {known.UnitLabel}, not {r.Unit}.");
            }
        }
        var forecastIndicators = forecastRows.Select(r => r.Indicator).ToHashSet(StringComparer.Ordinal);
        foreach (var o in observationRows.Where(o => !indicators.ContainsKey(o.Indicator) && !forecastIndicators.Contains(o.Indicator)))
        {
            report.Add(RowKey("observations", o.Row), $"Row {o.Row} (line {o.Row + 1}): indicator '{o.Indicator}' is neither in the forecasts file nor among the indicators, so its unit is unknown.");
        }
        if (report.Count > 0)
        {
            return Invalid(report);
        }

        try
        {
            return await SaveAsync(forecastRows, observationRows, indicators, actor);
        }
        catch (DbUpdateException)
        {
            // A unique index refused a row: another import created the same panel, indicator or expert meanwhile.
            db.ChangeTracker.Clear();
            return Outcome<PastPanelImportResult>.Conflict(
                "Another import of the same panels (or of the same new indicators or experts) finished meanwhile; nothing was imported. Reload and check before importing again.");
        }
    }

    private async Task<Outcome<PastPanelImportResult>> SaveAsync(
        List<ForecastRow> forecastRows, List<ObservationRow> observationRows, Dictionary<string, Indicator> indicators, string actor)
    {
        var now = clock.GetUtcNow().UtcDateTime;
        await using var tx = await db.Database.BeginTransactionAsync();

        // Indicators and experts first, for their ids.
        var decimalsOf = observationRows.GroupBy(o => o.Indicator).ToDictionary(g => g.Key, g => g.Max(o => o.Decimals), StringComparer.Ordinal);
        var indicatorsCreated = 0;
        foreach (var r in forecastRows.GroupBy(r => r.Indicator).Select(g => g.First()).Where(r => !indicators.ContainsKey(r.Indicator)))
        {
            var indicator = new Indicator
            {
                Key = r.Indicator, Name = r.Indicator, UnitLabel = r.Unit, Decimals = decimalsOf.GetValueOrDefault(r.Indicator, 2), CreatedAt = now,
                Description = "Created by an import of past panels.",
            };
            db.Indicators.Add(indicator);
            indicators[r.Indicator] = indicator;
            indicatorsCreated++;
        }
        var (experts, expertsCreated) = await MatchExpertsAsync(forecastRows.Select(r => r.Expert).Distinct(StringComparer.Ordinal).ToList(), now);
        await db.SaveChangesAsync();

        // Panels with their questions, memberships and rounds.
        var codes = await PanelCodes.NewAsync(db, forecastRows.Select(r => (r.Panel, r.Expert)).Distinct().Count());
        var nextCode = 0;
        var built = new List<(Panel Panel, List<ForecastRow> Rows)>();
        foreach (var group in forecastRows.GroupBy(r => r.Panel, StringComparer.Ordinal))
        {
            var rows = group.ToList();
            var start = rows[0].PanelStart;
            var closed = (rows[0].PanelClosed ?? start).ToDateTime(TimeOnly.MinValue, DateTimeKind.Utc);
            var panel = new Panel
            {
                Title = group.Key, Brief = "Imported from the firm's records of past panels.", StartsOn = start,
                TargetPeriods = string.Join(",", rows.Select(r => r.Period).Distinct().Order()), State = PanelState.Concluded,
                CreatedAt = now, CreatedBy = actor, ConcludedAt = closed, ExternalKey = group.Key, Version = Guid.NewGuid(),
            };
            var order = 0;
            foreach (var q in rows.GroupBy(r => r.Indicator, StringComparer.Ordinal))
            {
                panel.Questions.Add(new Question
                {
                    IndicatorId = indicators[q.Key].Id, Order = ++order, Label = indicators[q.Key].Name,
                    Format = q.First().IsRange ? ResponseFormat.Range : ResponseFormat.Point,
                    TargetPeriods = string.Join(",", q.Select(r => r.Period).Distinct().Order()),
                });
            }
            foreach (var expert in rows.Select(r => r.Expert).Distinct(StringComparer.Ordinal))
            {
                panel.Memberships.Add(new PanelMembership
                {
                    ExpertId = experts[expert].Id, PanelCode = codes[nextCode++], TokenHash = Secrets.Hash(Secrets.NewToken()),
                    TokenIssuedAt = now, State = MembershipState.Invited, CreatedAt = now,
                });
            }
            foreach (var number in rows.Select(r => r.Round).Distinct().Order())
            {
                panel.Rounds.Add(new Round
                {
                    Number = number, State = RoundState.Closed, OpensAt = start.ToDateTime(TimeOnly.MinValue, DateTimeKind.Utc),
                    ClosesAt = closed, ClosedAt = closed, ClosedBy = actor, Version = Guid.NewGuid(),
                });
            }
            db.Panels.Add(panel);
            built.Add((panel, rows));
        }
        await db.SaveChangesAsync();

        // Estimates and the frozen feedback of every round.
        var estimates = 0;
        foreach (var (panel, rows) in built)
        {
            var questionOf = panel.Questions.ToDictionary(q => indicators.Single(i => i.Value.Id == q.IndicatorId).Key, StringComparer.Ordinal);
            var membershipOf = panel.Memberships.ToDictionary(m => m.ExpertId);
            foreach (var round in panel.Rounds)
            {
                var answers = new List<CountedAnswer>();
                foreach (var r in rows.Where(r => r.Round == round.Number))
                {
                    var question = questionOf[r.Indicator];
                    var membership = membershipOf[experts[r.Expert].Id];
                    var estimate = new Estimate
                    {
                        RoundId = round.Id, MembershipId = membership.Id, QuestionId = question.Id, Period = r.Period.ToString(),
                        Value = r.Value, P10 = r.P10, P50 = r.P50, P90 = r.P90, CreatedAt = round.ClosedAt!.Value,
                    };
                    db.Estimates.Add(estimate);
                    answers.Add(CountedAnswer.From(estimate));
                    estimates++;
                }
                FeedbackFreezer.Freeze(db, round.Id, panel.Questions, answers, panel.Settings);
            }
        }
        await db.SaveChangesAsync();

        // The consensus of each panel's last round, through the app's own consensus code.
        foreach (var (panel, _) in built)
        {
            var last = panel.Rounds.MaxBy(r => r.Number)!;
            var entries = await publisher.ComputeAsync(panel, last, ConsensusWeighting.Equal);
            db.Consensus.AddRange(entries);
            Audit.Record(db, actor, "panel.imported", "Panel", panel.Id, panel.Id,
                new { key = panel.ExternalKey, rounds = panel.Rounds.Count, members = panel.Memberships.Count, consensus = entries.Count }, now);
        }

        var (added, corrected, unchanged) = await RecordObservationsAsync(observationRows, indicators, actor, now);
        Audit.Record(db, actor, "past-panels.imported", "Import", now.ToString("O", CultureInfo.InvariantCulture), details: new
        {
            panels = built.Count, estimates, expertsCreated, indicatorsCreated, observationsAdded = added, observationsCorrected = corrected,
        }, at: now);
        await db.SaveChangesAsync();
        await tx.CommitAsync();
        db.ChangeTracker.Clear();
        return Outcome<PastPanelImportResult>.Ok(new PastPanelImportResult(
            built.Count, built.Sum(b => b.Panel.Questions.Count), built.Sum(b => b.Panel.Rounds.Count), estimates, experts.Count, expertsCreated,
            indicatorsCreated, added, corrected, unchanged));
    }

    private static Outcome<PastPanelImportResult> Invalid(Report report)
    {
        if (report.Count > MaxReportedErrors)
        {
            report.Errors.Add("file", $"{report.Count} errors in all; the first {MaxReportedErrors} are listed.");
        }
        return Outcome<PastPanelImportResult>.Invalid(report.Errors);
    }

    private static string RowKey(string file, int row) => CsvUploads.RowKey(file, row);

    /// <summary>Reads one of the files as every CSV import does; its errors go to the report.</summary>
    private static CsvTable? ReadCsv(Stream stream, string file, Report report)
    {
        var errors = new FieldErrors();
        var table = CsvUploads.Read(stream, errors, file);
        foreach (var (key, messages) in errors.ToDictionary())
        {
            foreach (var message in messages)
            {
                report.Add(key, message);
            }
        }
        return table;
    }

    private static List<ForecastRow>? ParseForecasts(Stream stream, Report report)
    {
        var table = ReadCsv(stream, "forecasts", report);
        if (table is null)
        {
            return null;
        }
        var (headers, rows) = (table.Headers, table.Rows);
        var missing = ForecastColumns.Where(c => !headers.Contains(c)).ToList();
        var hasValue = headers.Contains("value");
        var hasRange = headers.Contains("p10") && headers.Contains("p50") && headers.Contains("p90");
        if (missing.Count > 0)
        {
            report.Add("forecasts", "The header row lacks " + string.Join(", ", missing) + ".");
        }
        if (!hasValue && !hasRange)
        {
            report.Add("forecasts", "The header row needs a 'value' column or the columns 'p10', 'p50' and 'p90'.");
        }
        if (rows.Count == 0)
        {
            report.Add("forecasts", "The file has no data rows.");
        }
        if (report.Count > 0)
        {
            return null;
        }

        var result = new List<ForecastRow>(rows.Count);
        var panelStarts = new Dictionary<string, (DateOnly Start, DateOnly? Closed)>(StringComparer.Ordinal);
        var units = new Dictionary<string, string>(StringComparer.Ordinal);
        var formats = new Dictionary<(string, string), bool>();
        var seen = new HashSet<(string, string, Period, string, int)>();
        var panelPeriods = new Dictionary<string, HashSet<Period>>(StringComparer.Ordinal);
        foreach (var r in rows)
        {
            var key = RowKey("forecasts", r.Row);
            var before = report.Count;
            void Error(string message) => report.Add(key, $"Row {r.Row} (line {r.Line}): {message}");

            var panel = r["panel"];
            if (panel is null)
            {
                Error("panel is empty.");
            }
            else if (panel.Length > FieldLengths.ExternalKey)
            {
                Error($"panel is at most {FieldLengths.ExternalKey} characters.");
            }
            var start = CsvUploads.ParseDate(r["panel_start"], out _);
            if (start is null)
            {
                Error($"panel_start '{r["panel_start"]}' is not a date (yyyy-MM-dd).");
            }
            var closed = CsvUploads.ParseDate(r["panel_closed"], out var badClosed);
            if (badClosed)
            {
                Error($"panel_closed '{r["panel_closed"]}' is not a date (yyyy-MM-dd).");
            }
            else if (closed < start)
            {
                Error("panel_closed is before panel_start.");
            }
            var indicator = r["indicator"]?.ToLowerInvariant();
            if (indicator is null || indicator.Length > FieldLengths.IndicatorKey || !IndicatorKeys.IsWellFormed(indicator))
            {
                Error($"indicator '{r["indicator"]}' is not a key (lower-case letters, digits and dashes, e.g. apt-price-old-harbour).");
                indicator = null;
            }
            var unit = r["unit"];
            if (unit is null || unit.Length > FieldLengths.UnitLabel)
            {
                Error($"unit is empty or longer than {FieldLengths.UnitLabel} characters.");
            }
            if (!Period.TryParse(r["target_period"], out var period))
            {
                Error($"target_period '{r["target_period"]}' is not a period: write a year such as 2024 or a quarter such as 2024Q3.");
            }
            else if (start is { } s && period.Value.EndDate < s)
            {
                Error($"target_period {period} ends before panel_start {s:yyyy-MM-dd}: a target period lies after the panel's start.");
            }
            var expert = r["expert"];
            if (expert is null || expert.Length > FieldLengths.ExternalKey)
            {
                Error($"expert is empty or longer than {FieldLengths.ExternalKey} characters.");
            }
            if (!int.TryParse(r["round"], NumberStyles.None, CultureInfo.InvariantCulture, out var round) || round is < 1 or > 50)
            {
                Error($"round '{r["round"]}' is not a round number (1, 2, ...).");
            }
            var value = CsvUploads.ParseNumber(r["value"], out var badValue);
            var p10 = CsvUploads.ParseNumber(r["p10"], out var bad10);
            var p50 = CsvUploads.ParseNumber(r["p50"], out var bad50);
            var p90 = CsvUploads.ParseNumber(r["p90"], out var bad90);
            var badNumbers = new[] { ("value", badValue), ("p10", bad10), ("p50", bad50), ("p90", bad90) }.Where(b => b.Item2 is not null).ToList();
            foreach (var (name, bad) in badNumbers)
            {
                Error($"{name} {bad}");
            }
            if (badNumbers.Count == 0)
            {
                var parts = (p10 is null ? 0 : 1) + (p50 is null ? 0 : 1) + (p90 is null ? 0 : 1);
                if (value is not null && parts > 0)
                {
                    Error("give either value or p10, p50 and p90, not both.");
                }
                else if (value is null && parts != 3)
                {
                    Error("give value, or all of p10, p50 and p90.");
                }
                else if (parts == 3 && !(p10 <= p50 && p50 <= p90))
                {
                    Error("the range must satisfy p10 <= p50 <= p90.");
                }
            }
            if (report.Count > before)
            {
                continue;
            }

            // Cross-row rules: one start per panel, one unit per indicator, one format per question, no duplicates.
            if (panelStarts.TryGetValue(panel!, out var known))
            {
                if (known.Start != start || (closed is not null && known.Closed != closed))
                {
                    Error($"panel '{panel}' has another panel_start or panel_closed on an earlier row.");
                }
            }
            else
            {
                panelStarts[panel!] = (start!.Value, closed);
            }
            if (units.TryGetValue(indicator!, out var knownUnit) && !string.Equals(knownUnit, unit, StringComparison.Ordinal))
            {
                Error($"indicator '{indicator}' has unit '{knownUnit}' on an earlier row.");
            }
            units.TryAdd(indicator!, unit!);
            var isRange = value is null;
            if (formats.TryGetValue((panel!, indicator!), out var wasRange) && wasRange != isRange)
            {
                Error($"panel '{panel}' asks about '{indicator}' with {(wasRange ? "ranges (p10, p50, p90)" : "single values")} on earlier rows; one question has one response format.");
            }
            formats.TryAdd((panel!, indicator!), isRange);
            if (!seen.Add((panel!, indicator!, period!.Value, expert!, round)))
            {
                Error($"expert '{expert}' has another forecast of {indicator} {period} in round {round} of panel '{panel}'.");
            }
            if (!panelPeriods.TryGetValue(panel!, out var periods))
            {
                panelPeriods[panel!] = periods = [];
            }
            if (periods.Add(period.Value) && periods.Count > 60)
            {
                Error($"panel '{panel}' has more than 60 target periods.");
            }
            if (report.Count > before)
            {
                continue;
            }
            result.Add(new ForecastRow(r.Row, panel!, start!.Value, closed ?? panelStarts[panel!].Closed, indicator!, unit!, period.Value, expert!, round,
                value, isRange ? p10 : null, isRange ? p50 : null, isRange ? p90 : null));
        }
        return result;
    }

    private static List<ObservationRow>? ParseObservations(Stream stream, Report report, DateOnly today, int lagDays)
    {
        var table = ReadCsv(stream, "observations", report);
        if (table is null)
        {
            return null;
        }
        var (headers, rows) = (table.Headers, table.Rows);
        var missing = ObservationColumns.Where(c => !headers.Contains(c)).ToList();
        if (missing.Count > 0)
        {
            report.Add("observations", "The header row lacks " + string.Join(", ", missing) + " (optional: source, observed_on).");
            return null;
        }
        var result = new List<ObservationRow>(rows.Count);
        var seen = new HashSet<(string, Period)>();
        foreach (var r in rows)
        {
            var key = RowKey("observations", r.Row);
            var before = report.Count;
            void Error(string message) => report.Add(key, $"Row {r.Row} (line {r.Line}): {message}");
            var indicator = r["indicator"]?.ToLowerInvariant();
            if (indicator is null || !IndicatorKeys.IsWellFormed(indicator))
            {
                Error($"indicator '{r["indicator"]}' is not a key (lower-case letters, digits and dashes).");
            }
            if (!Period.TryParse(r["period"], out var period))
            {
                Error($"period '{r["period"]}' is not a period: write a year such as 2024 or a quarter such as 2024Q3.");
            }
            var value = CsvUploads.ParseNumber(r["value"], out var badValue);
            if (badValue is not null)
            {
                Error($"value {badValue}");
            }
            else if (value is null)
            {
                Error("value is empty.");
            }
            var source = r["source"];
            if (source?.Length > FieldLengths.Source)
            {
                Error($"source is at most {FieldLengths.Source} characters.");
            }
            var observedOn = CsvUploads.ParseDate(r["observed_on"], out var badDate);
            if (badDate)
            {
                Error($"observed_on '{r["observed_on"]}' is not a date (yyyy-MM-dd).");
            }
            else if (Catalog.ObservedOnError(period, observedOn, today) is { } dateError)
            {
                Error("observed_on: " + dateError);
            }
            if (report.Count > before)
            {
                continue;
            }
            if (!seen.Add((indicator!, period!.Value)))
            {
                Error($"{indicator} {period} appears twice.");
                continue;
            }
            var text = r["value"]!;
            var dot = text.IndexOf('.', StringComparison.Ordinal);
            var decimals = dot < 0 || text.Contains('e', StringComparison.OrdinalIgnoreCase) ? 0 : Math.Min(4, text.Length - dot - 1);
            // Without observed_on, a value counts as published a usual lag after its period ended (at the latest today).
            var end = period.Value.EndDate;
            var lagged = end.AddDays(lagDays);
            observedOn ??= lagged <= today ? lagged : end < today ? today : null;
            result.Add(new ObservationRow(r.Row, indicator!, period.Value, value!.Value, source, observedOn, decimals));
        }
        return result;
    }

    private async Task<(Dictionary<string, Expert> Experts, int Created)> MatchExpertsAsync(IReadOnlyList<string> keys, DateTime now)
    {
        var byKey = (await db.Experts.Where(e => e.ExternalKey != null && keys.Contains(e.ExternalKey)).ToListAsync())
            .ToDictionary(e => e.ExternalKey!, StringComparer.Ordinal);
        var emails = keys.Where(k => !byKey.ContainsKey(k) && k.Contains('@', StringComparison.Ordinal)).Select(k => k.ToLowerInvariant()).ToList();
        var byEmail = emails.Count == 0 ? [] : (await db.Experts.Where(e => e.ExternalKey == null && emails.Contains(e.Email)).ToListAsync())
            .ToDictionary(e => e.Email, StringComparer.Ordinal);
        var created = 0;
        var result = new Dictionary<string, Expert>(StringComparer.Ordinal);
        var placeholders = keys.ToDictionary(k => k, PlaceholderEmail, StringComparer.Ordinal);
        var placeholderList = placeholders.Values.ToList();
        var taken = (await db.Experts.Where(e => placeholderList.Contains(e.Email)).Select(e => e.Email).ToListAsync()).ToHashSet(StringComparer.Ordinal);
        foreach (var key in keys)
        {
            if (byKey.TryGetValue(key, out var expert) || byEmail.TryGetValue(key.ToLowerInvariant(), out expert))
            {
                result[key] = expert;
                continue;
            }
            var email = placeholders[key];
            if (taken.Contains(email))
            {
                email = email.Replace("@", "-" + Guid.NewGuid().ToString("N")[..8] + "@", StringComparison.Ordinal);
            }
            expert = new Expert { Name = key, Email = email, ExternalKey = key, CreatedAt = now, Affiliation = "Imported with past panels" };
            db.Experts.Add(expert);
            result[key] = expert;
            created++;
        }
        return (result, created);
    }

    /// <summary>A placeholder email (Email is required and unique): the key's readable part and a short hash, at a reserved domain.</summary>
    private static string PlaceholderEmail(string key)
    {
        var slug = new StringBuilder();
        foreach (var c in key.ToLowerInvariant())
        {
            slug.Append(c is >= 'a' and <= 'z' or >= '0' and <= '9' or '-' or '.' ? c : '-');
        }
        var readable = slug.ToString().Trim('-', '.');
        readable = readable.Length > 60 ? readable[..60] : readable;
        return $"{(readable.Length == 0 ? "expert" : readable)}-{Secrets.Hash(key)[..8]}@imported.invalid";
    }

    private async Task<(int Added, int Corrected, int Unchanged)> RecordObservationsAsync(
        IReadOnlyList<ObservationRow> rows, IReadOnlyDictionary<string, Indicator> indicators, string actor, DateTime now)
    {
        int added = 0, corrected = 0, unchanged = 0;
        foreach (var group in rows.GroupBy(r => r.Indicator, StringComparer.Ordinal))
        {
            var result = await ObservationHistory.RecordAsync(db, indicators[group.Key],
                [.. group.Select(r => new ObservationEntry(r.Period, r.Value, r.Source, r.ObservedOn))], actor, now);
            (added, corrected, unchanged) = (added + result.Added, corrected + result.Corrected, unchanged + result.Unchanged);
        }
        return (added, corrected, unchanged);
    }
}
