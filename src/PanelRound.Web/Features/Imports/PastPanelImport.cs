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
    /// <summary>Imports the two files, or reports why not; nothing is stored unless everything is.</summary>
    /// <remarks>
    /// Implementation note: the forecasts file is read twice, a row at a time. The first reading
    /// checks every row and keeps only what describes the panels (their questions, experts and
    /// rounds); the second streams the forecasts into the database (binary COPY on PostgreSQL). A
    /// forecast given twice is found in the database, round by round, as each round's feedback is
    /// frozen; then everything is rolled back and a third reading names the rows. So memory grows
    /// with the number of panels and experts and with the largest round, not with the file.
    /// </remarks>
    /// <param name="forecasts">The forecasts file; read again from its position at the call (copied to a temporary file first if it cannot seek).</param>
    /// <param name="observations">The observations file, if any: one row per indicator and period, read whole.</param>
    /// <param name="actor">Who imports, for the audit log.</param>
    public async Task<Result<PastPanelImportResult>> ImportAsync(Stream forecasts, Stream? observations, string actor)
    {
        var today = DateOnly.FromDateTime(clock.GetUtcNow().UtcDateTime);
        var lagDays = options.Value.ImportPublicationLagDays;
        await using var copy = forecasts.CanSeek ? null : await TemporaryCopyAsync(forecasts);
        var file = copy ?? forecasts;
        var origin = file.Position;
        var read = PastPanelCsv.Read(file, observations, today, lagDays, findDuplicates: false);
        if (!read.IsOk)
        {
            return read.As<PastPanelImportResult>();
        }
        var (summary, observationRows) = (read.Value!.Forecasts, read.Value.Observations);

        // Checks against the database: panels not imported twice, units agree with known indicators.
        var report = new RowErrorReport();
        var panelKeys = summary.Panels.Select(p => p.Key).ToList();
        var existingPanels = (await db.Panels.AsNoTracking().Where(p => p.ExternalKey != null && panelKeys.Contains(p.ExternalKey))
            .Select(p => p.ExternalKey!).ToListAsync()).ToHashSet(StringComparer.Ordinal);
        foreach (var first in summary.Panels.Where(p => existingPanels.Contains(p.Key)))
        {
            report.Add(CsvUploads.RowKey("forecasts", first.FirstRow), $"Row {first.FirstRow} (line {first.FirstRow + 1}): panel '{first.Key}' exists already (imported before?); nothing was imported.");
        }
        var indicatorKeys = summary.Indicators.Select(i => i.Indicator).Concat(observationRows.Select(o => o.Indicator)).Distinct(StringComparer.Ordinal).ToList();
        var indicators = await db.Indicators.Where(i => indicatorKeys.Contains(i.Key)).ToDictionaryAsync(i => i.Key, StringComparer.Ordinal);
        foreach (var (indicator, unit, row) in summary.Indicators)
        {
            if (indicators.TryGetValue(indicator, out var known) && !string.Equals(known.UnitLabel, unit, StringComparison.Ordinal))
            {
                report.Add(CsvUploads.RowKey("forecasts", row), $"Row {row} (line {row + 1}): indicator '{indicator}' is in {known.UnitLabel}, not {unit}.");
            }
        }
        foreach (var o in observationRows.Where(o => !indicators.ContainsKey(o.Indicator) && !summary.HasIndicator(o.Indicator)))
        {
            report.Add(CsvUploads.RowKey("observations", o.Row), $"Row {o.Row} (line {o.Row + 1}): indicator '{o.Indicator}' is neither in the forecasts file nor among the indicators, so its unit is unknown.");
        }
        if (report.Count > 0)
        {
            return Result<PastPanelImportResult>.Invalid(report.ToFieldErrors());
        }

        try
        {
            file.Position = origin;
            var saved = await SaveAsync(summary, file, observationRows, indicators, actor);
            if (saved is not null)
            {
                return saved;
            }
        }
        catch (DbUpdateException)
        {
            // A unique index refused a row: another import created the same panel, indicator or expert meanwhile.
            db.ChangeTracker.Clear();
            return Result<PastPanelImportResult>.Conflict(
                "Another import of the same panels (or of the same new indicators or experts) finished meanwhile; nothing was imported. Reload and check before importing again.");
        }

        // A forecast given twice: read the file once more, keeping every key, to name the rows.
        file.Position = origin;
        var again = PastPanelCsv.Read(file, null, today, lagDays, findDuplicates: true);
        return again.IsOk
            ? throw new InvalidOperationException("The database holds a forecast twice that the forecasts file does not.")
            : again.As<PastPanelImportResult>();
    }

    /// <summary>A seekable copy of a stream that cannot seek, in a temporary file deleted when disposed.</summary>
    private static async Task<Stream> TemporaryCopyAsync(Stream stream)
    {
        var copy = new FileStream(Path.GetTempFileName(), FileMode.Create, FileAccess.ReadWrite, FileShare.None, 64 * 1024, FileOptions.DeleteOnClose);
        await stream.CopyToAsync(copy);
        copy.Position = 0;
        return copy;
    }

    /// <summary>Stores everything in one transaction; null, with nothing stored, when a forecast is given twice.</summary>
    private async Task<Result<PastPanelImportResult>?> SaveAsync(
        PastForecastSummary summary, Stream forecasts, IReadOnlyList<PastObservationRow> observationRows, Dictionary<string, Indicator> indicators, string actor)
    {
        var now = clock.GetUtcNow().UtcDateTime;
        await using var tx = await db.Database.BeginTransactionAsync();
        // Any error undoes the whole import, so a savepoint around each save would only cost round trips.
        db.Database.AutoSavepointsEnabled = false;

        // Indicators and experts first, for their ids.
        var decimalsOf = observationRows.GroupBy(o => o.Indicator).ToDictionary(g => g.Key, g => g.Max(o => o.Decimals), StringComparer.Ordinal);
        var indicatorsCreated = 0;
        foreach (var (key, unit, _) in summary.Indicators.Where(i => !indicators.ContainsKey(i.Indicator)))
        {
            var indicator = new Indicator
            {
                Key = key, Name = key, UnitLabel = unit, Decimals = decimalsOf.GetValueOrDefault(key, 2), CreatedAt = now,
                Description = "Created by an import of past panels.",
            };
            db.Indicators.Add(indicator);
            indicators[key] = indicator;
            indicatorsCreated++;
        }
        var (experts, expertsCreated) = await MatchExpertsAsync(summary.Experts, now);
        await db.SaveChangesAsync();

        // Panels with their questions, memberships and rounds.
        var codes = await PanelCodes.NewAsync(db, summary.Panels.Sum(p => p.Experts.Count));
        var nextCode = 0;
        var built = new List<(Panel Panel, PastPanelPlan Plan)>();
        foreach (var plan in summary.Panels)
        {
            var closed = (plan.Closed ?? plan.Start).ToDateTime(TimeOnly.MinValue, DateTimeKind.Utc);
            var panel = new Panel
            {
                Title = plan.Key, Brief = "Imported from the firm's records of past panels.", StartsOn = plan.Start,
                TargetPeriods = string.Join(",", plan.TargetPeriods),
                State = PanelState.Concluded,
                CreatedAt = now, CreatedBy = actor, ConcludedAt = closed, ExternalKey = plan.Key, Version = Guid.NewGuid(),
            };
            var order = 0;
            foreach (var q in plan.Questions)
            {
                var indicator = indicators[q.Indicator];
                panel.Questions.Add(new Question
                {
                    IndicatorId = indicator.Id, Order = ++order, Label = indicator.Name,
                    Format = q.IsRange ? ResponseFormat.Range : ResponseFormat.Point,
                    TargetPeriods = string.Join(",", q.Periods),
                    IsCalibration = q.Calibration,
                    TrueValue = q.Calibration ? await TruthOfAsync(observationRows, indicator, q.FirstPeriod) : null,
                    TrueValueRecordedAt = q.Calibration ? now : null,
                });
            }
            foreach (var expert in plan.Experts)
            {
                panel.Memberships.Add(new PanelMembership
                {
                    ExpertId = experts[expert].Id, PanelCode = codes[nextCode++], TokenHash = Secrets.Hash(Secrets.NewToken()),
                    TokenIssuedAt = now, State = MembershipState.Invited, CreatedAt = now,
                });
            }
            foreach (var number in plan.Rounds)
            {
                panel.Rounds.Add(new Round
                {
                    Number = number, State = RoundState.Closed, OpensAt = plan.Start.ToDateTime(TimeOnly.MinValue, DateTimeKind.Utc),
                    ClosesAt = closed, ClosedAt = closed, ClosedBy = actor, Version = Guid.NewGuid(),
                });
            }
            db.Panels.Add(panel);
            built.Add((panel, plan));
        }
        await db.SaveChangesAsync();

        // The forecasts, read again and streamed into the database.
        var ids = built.ToDictionary(b => b.Plan.Key, b => (
            Questions: b.Panel.Questions.ToDictionary(q => b.Plan.Questions[q.Order - 1].Indicator, q => q.Id, StringComparer.Ordinal),
            Members: b.Panel.Memberships.ToDictionary(m => m.ExpertId, m => m.Id),
            Rounds: b.Panel.Rounds.ToDictionary(r => r.Number, r => (r.Id, ClosedAt: r.ClosedAt!.Value))), StringComparer.Ordinal);
        var estimates = await EstimateRows.InsertAsync(db, PastPanelCsv.ForecastRows(forecasts).Select(r =>
        {
            var panel = ids[r.Panel];
            var round = panel.Rounds[r.Round];
            return new EstimateRow(round.Id, panel.Members[experts[r.Expert].Id], panel.Questions[r.Indicator], r.Period.ToString(),
                r.Value, r.P10, r.P50, r.P90, round.ClosedAt);
        }));

        // The frozen feedback of every round, from its answers as stored; a forecast given twice undoes the import.
        foreach (var (panel, _) in built)
        {
            foreach (var round in panel.Rounds.OrderBy(r => r.Number))
            {
                var answers = await db.Estimates.AsNoTracking().Where(e => e.RoundId == round.Id).OrderBy(e => e.Id)
                    .Select(e => new CountedAnswer(e.MembershipId, e.QuestionId, e.Period, e.Value, e.P10, e.P50, e.P90, e.Rationale)).ToListAsync();
                var seen = new HashSet<(int, int, string)>();
                if (answers.Any(a => !seen.Add((a.MembershipId, a.QuestionId, a.Period))))
                {
                    await tx.RollbackAsync();
                    db.ChangeTracker.Clear();
                    return null;
                }
                FeedbackFreezer.Freeze(db, round.Id, panel.Questions, answers, panel.Settings);
            }
        }
        await db.SaveChangesAsync();
        // Saved feedback is not needed again.
        foreach (var entry in db.ChangeTracker.Entries<FrozenFeedback>().ToList())
        {
            entry.State = EntityState.Detached;
        }

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
