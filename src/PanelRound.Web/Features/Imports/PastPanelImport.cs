using System.Globalization;
using System.Text;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.Options;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Roster;
using PanelRound.Web.Features.Rounds;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Imports;

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
/// can only make the backtest use less history, never more) and <c>calibration</c> (0 or 1; 1 marks
/// a calibration question: ranges, one target period, which may lie before the panel's start; its
/// true value is the indicator's observation at that period, from the observations file or the
/// catalog; it takes no part in the consensus or the long-horizon scorecard). <c>observations</c>: <c>indicator</c>,
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
    public async Task<Result<PastPanelImportResult>> ImportAsync(Stream forecasts, Stream? observations, string actor)
    {
        var today = DateOnly.FromDateTime(clock.GetUtcNow().UtcDateTime);
        var parsed = PastPanelCsv.Parse(forecasts, observations, today, options.Value.ImportPublicationLagDays);
        if (!parsed.IsOk)
        {
            return parsed.As<PastPanelImportResult>();
        }
        var (forecastRows, observationRows) = (parsed.Value!.Forecasts, parsed.Value.Observations);

        // Checks against the database: panels not imported twice, units agree with known indicators.
        var report = new RowErrorReport();
        var panelKeys = forecastRows.Select(r => r.Panel).Distinct(StringComparer.Ordinal).ToList();
        var existingPanels = (await db.Panels.AsNoTracking().Where(p => p.ExternalKey != null && panelKeys.Contains(p.ExternalKey))
            .Select(p => p.ExternalKey!).ToListAsync()).ToHashSet(StringComparer.Ordinal);
        foreach (var first in forecastRows.GroupBy(r => r.Panel).Select(g => g.First()).Where(r => existingPanels.Contains(r.Panel)))
        {
            report.Add(CsvUploads.RowKey("forecasts", first.Row), $"Row {first.Row} (line {first.Row + 1}): panel '{first.Panel}' exists already (imported before?); nothing was imported.");
        }
        var indicatorKeys = forecastRows.Select(r => r.Indicator).Concat(observationRows.Select(o => o.Indicator)).Distinct(StringComparer.Ordinal).ToList();
        var indicators = await db.Indicators.Where(i => indicatorKeys.Contains(i.Key)).ToDictionaryAsync(i => i.Key, StringComparer.Ordinal);
        foreach (var r in forecastRows.GroupBy(r => r.Indicator).Select(g => g.First()))
        {
            if (indicators.TryGetValue(r.Indicator, out var known) && !string.Equals(known.UnitLabel, r.Unit, StringComparison.Ordinal))
            {
                report.Add(CsvUploads.RowKey("forecasts", r.Row), $"Row {r.Row} (line {r.Row + 1}): indicator '{r.Indicator}' is in {known.UnitLabel}, not {r.Unit}.");
            }
        }
        var forecastIndicators = forecastRows.Select(r => r.Indicator).ToHashSet(StringComparer.Ordinal);
        foreach (var o in observationRows.Where(o => !indicators.ContainsKey(o.Indicator) && !forecastIndicators.Contains(o.Indicator)))
        {
            report.Add(CsvUploads.RowKey("observations", o.Row), $"Row {o.Row} (line {o.Row + 1}): indicator '{o.Indicator}' is neither in the forecasts file nor among the indicators, so its unit is unknown.");
        }
        if (report.Count > 0)
        {
            return Result<PastPanelImportResult>.Invalid(report.ToFieldErrors());
        }

        try
        {
            return await SaveAsync(forecastRows, observationRows, indicators, actor);
        }
        catch (DbUpdateException)
        {
            // A unique index refused a row: another import created the same panel, indicator or expert meanwhile.
            db.ChangeTracker.Clear();
            return Result<PastPanelImportResult>.Conflict(
                "Another import of the same panels (or of the same new indicators or experts) finished meanwhile; nothing was imported. Reload and check before importing again.");
        }
    }

    private async Task<Result<PastPanelImportResult>> SaveAsync(
        IReadOnlyList<PastForecastRow> forecastRows, IReadOnlyList<PastObservationRow> observationRows, Dictionary<string, Indicator> indicators, string actor)
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
        var built = new List<(Panel Panel, List<PastForecastRow> Rows)>();
        foreach (var group in forecastRows.GroupBy(r => r.Panel, StringComparer.Ordinal))
        {
            var rows = group.ToList();
            var start = rows[0].PanelStart;
            var closed = (rows[0].PanelClosed ?? start).ToDateTime(TimeOnly.MinValue, DateTimeKind.Utc);
            var panel = new Panel
            {
                Title = group.Key, Brief = "Imported from the firm's records of past panels.", StartsOn = start,
                TargetPeriods = string.Join(",", (rows.Any(r => !r.Calibration) ? rows.Where(r => !r.Calibration) : rows).Select(r => r.Period).Distinct().Order()),
                State = PanelState.Concluded,
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
                    IsCalibration = q.First().Calibration,
                    TrueValue = q.First().Calibration ? await TruthOfAsync(observationRows, indicators[q.Key], q.First().Period) : null,
                    TrueValueRecordedAt = q.First().Calibration ? now : null,
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
        return Result<PastPanelImportResult>.Ok(new PastPanelImportResult(
            built.Count, built.Sum(b => b.Panel.Questions.Count), built.Sum(b => b.Panel.Rounds.Count), estimates, experts.Count, expertsCreated,
            indicatorsCreated, added, corrected, unchanged));
    }

    /// <summary>A calibration question's true value: the file's observation of the indicator at the period, else the catalog's current one.</summary>
    private async Task<double?> TruthOfAsync(IReadOnlyList<PastObservationRow> observations, Indicator indicator, Core.Domain.Period period)
    {
        if (observations.FirstOrDefault(o => o.Indicator == indicator.Key && o.Period == period) is { } row)
        {
            return row.Value;
        }
        var text = period.ToString();
        return await db.Observations.AsNoTracking().Where(o => o.IndicatorId == indicator.Id && o.Period == text && o.SupersededAt == null)
            .Select(o => (double?)o.Value).FirstOrDefaultAsync();
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
        IReadOnlyList<PastObservationRow> rows, IReadOnlyDictionary<string, Indicator> indicators, string actor, DateTime now)
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
