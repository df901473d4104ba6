using System.Globalization;
using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Calibration;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Reports;

/// <summary>
/// The audit-ready PDF of a panel: a cover (the method in plain words, experts and responses per
/// round, the caution), per question a chart of the reference history with each round's band and
/// the consensus, a table per round, the stop suggestion, excluded answers counted and a
/// selection of unattributed rationales; a method appendix with each statistic's published
/// source and the panel's settings; the audit trail; declared interests without names.
/// Calibration questions are left out of the question and consensus sections (they take no part
/// in the consensus) and have a short section of their own: the questions, their true values once
/// recorded, each panel code's scores and weight, and whether the consensus used those weights.
/// Panel codes only, never an expert's name.
/// </summary>
public static partial class PanelDossier
{
    [System.Text.RegularExpressions.GeneratedRegex(@"^(none|no|nil|n/a|-)(\s+(declared|to declare))?\.?$", System.Text.RegularExpressions.RegexOptions.IgnoreCase)]
    private static partial System.Text.RegularExpressions.Regex NoInterest();

    /// <summary>Rationales shown per question (unattributed, in alphabetical order).</summary>
    public const int RationalesPerQuestion = 8;

    // Ten distinguishable blues and purples for up to ten rounds (the round cap's maximum); the consensus is orange.
    private static readonly string[] RoundColours = ["#9ecae1", "#6baed6", "#3182bd", "#08519c", "#08306b", "#bcbddc", "#9e9ac8", "#807dba", "#6a51a3", "#4a1486"];

    public static async Task<byte[]?> BuildAsync(PanelRoundDbContext db, PanelResults results, int panelId, DateTime now)
    {
        var view = await results.BuildAsync(panelId);
        if (view is null)
        {
            return null;
        }
        var panel = await db.Panels.AsNoTracking().Include(p => p.Rounds).Include(p => p.Questions).ThenInclude(q => q.Indicator)
            .AsSplitQuery().SingleAsync(p => p.Id == panelId);
        var rounds = panel.Rounds.OrderBy(r => r.Number).ToList();
        var roundIds = rounds.Select(r => r.Id).ToList();
        var responders = await db.Estimates.AsNoTracking().Where(e => roundIds.Contains(e.RoundId) && !e.IsDraft)
            .Select(e => new { e.RoundId, e.MembershipId }).Distinct().ToListAsync();
        var members = await db.Memberships.AsNoTracking().Where(m => m.PanelId == panelId).Include(m => m.Expert).ToListAsync();
        var audit = await db.AuditEvents.AsNoTracking().Where(a => a.PanelId == panelId).OrderBy(a => a.Id).ToListAsync();
        var benchmarks = await new Features.Benchmarks.PanelBenchmarks(db).BuildAsync(panelId);
        var relations = Features.Relations.PanelRelations.OnConsensus(await db.Relations.AsNoTracking().Where(r => r.PanelId == panelId).OrderBy(r => r.Id).ToListAsync(), view);
        var calibration = panel.Questions.Any(q => q.IsCalibration)
            ? CalibrationResults.ViewOf(await CalibrationScoring.LoadAsync(db, panel))
            : null;
        return Render(new DossierData(panel, view, rounds, members.Count,
            responders.GroupBy(r => r.RoundId).ToDictionary(g => g.Key, g => g.Count()), audit,
            members.Select(m => m.Expert?.DeclaredInterests).ToList(), now, benchmarks, relations, calibration));
    }

    /// <summary>Everything a dossier shows, loaded; <see cref="Render"/> does no I/O.</summary>
    public sealed record DossierData(
        Panel Panel, PanelResultsView View, IReadOnlyList<Round> Rounds, int Members, IReadOnlyDictionary<int, int> RespondedByRoundId,
        IReadOnlyList<AuditEvent> Audit, IReadOnlyList<string?> DeclaredInterests, DateTime Now,
        Features.Benchmarks.PanelBenchmarksDto? Benchmarks = null, IReadOnlyList<Features.Relations.RelationConsensusCheck>? Relations = null,
        PanelCalibrationView? Calibration = null)
    {
        /// <summary>The questions of the consensus: every question but the calibration questions.</summary>
        public IReadOnlyList<QuestionResult> ConsensusQuestions =>
            Calibration is null ? View.Questions : [.. View.Questions.Where(q => !Calibration.Questions.Any(c => c.QuestionId == q.QuestionId))];
    }

    public static byte[] Render(DossierData d)
    {
        using var pdf = new PdfReport($"Dossier: {d.Panel.Title}", $"PanelRound dossier · {d.Panel.Title}", "A forecast, not a valuation or investment advice.");
        var questions = d.ConsensusQuestions;
        Cover(pdf, d.Panel, questions.Count, d.Calibration?.Questions.Count ?? 0, d.Rounds, d.Members, d.RespondedByRoundId, d.Now);
        foreach (var q in questions)
        {
            Question(pdf, q, d.Rounds, d.Benchmarks?.Questions.FirstOrDefault(b => b.QuestionId == q.QuestionId));
        }
        if (d.Calibration is { } calibration)
        {
            CalibrationSection(pdf, d.Panel, calibration, questions, d.Now);
        }
        BenchmarkReport.Relations(pdf, d.Relations);
        Appendix(pdf, d.Panel);
        AuditTrail(pdf, d.Audit);
        Interests(pdf, d.DeclaredInterests);
        return pdf.ToBytes();
    }

    private static void Cover(PdfReport pdf, Panel panel, int questions, int calibrationQuestions, IReadOnlyList<Round> rounds, int members, IReadOnlyDictionary<int, int> responded, DateTime now)
    {
        pdf.Space(40);
        pdf.Paragraph("Expert panel dossier", 11, colour: "#555555");
        pdf.Heading(panel.Title);
        pdf.Paragraph($"Panel start {panel.StartsOn:yyyy-MM-dd} · target periods {panel.TargetPeriods.Replace(",", ", ", StringComparison.Ordinal)} · "
            + (panel.ConcludedAt is { } c ? $"concluded {c:yyyy-MM-dd HH:mm} UTC" : $"state: {panel.State.ToString().ToLowerInvariant()}")
            + $" · dossier made {now:yyyy-MM-dd HH:mm} UTC", 9);
        pdf.Heading("How the figures were made", 2);
        pdf.Paragraph("A panel of experts answered anonymously through personal links in successive rounds (the Delphi method). "
            + "From the second round on, each expert saw the previous round's anonymous group feedback (median, quartiles, trimmed median and "
            + "unattributed rationales) beside their own previous answer, and revised or held. No expert saw another's identity or answer. "
            + "The published consensus is taken from the last round: for Point questions the median of the answers the outlier rule retains, "
            + "with the interquartile range of those answers as its band; for Range questions the averages of the experts' P10, P50 and P90.");
        pdf.Heading("Experts and responses", 2);
        pdf.Table(["Round", "Opened", "Closed", "Experts answering", "of members"],
            rounds.Select(r => (IReadOnlyList<string>)[r.Number.ToString(CultureInfo.InvariantCulture), $"{r.OpensAt:yyyy-MM-dd}",
                r.ClosedAt is { } closed ? $"{closed:yyyy-MM-dd HH:mm} UTC" : "open", responded.GetValueOrDefault(r.Id).ToString(CultureInfo.InvariantCulture),
                members.ToString(CultureInfo.InvariantCulture)]).ToList(),
            [1, 2, 2.5, 2, 1.5], new HashSet<int> { 3, 4 });
        pdf.Paragraph($"{questions} question(s)"
            + (calibrationQuestions > 0 ? $", and {calibrationQuestions} calibration question(s) that score the experts and take no part in the consensus (see \"Calibration questions\")" : "")
            + ". Experts are identified by panel codes only.", 9);
        pdf.Heading("Caution", 2);
        pdf.Paragraph(ConsensusExport.Caution, 9.5, bold: true);
    }

    private static void Question(PdfReport pdf, QuestionResult q, IReadOnlyList<Round> rounds, Features.Benchmarks.QuestionBenchmarksDto? benchmarks)
    {
        pdf.NewPage();
        pdf.Heading($"{q.Label} ({q.Unit})", 2);
        pdf.Paragraph($"Response format: {(q.Format == ResponseFormat.Range ? "a range (P10, P50, P90)" : "a single value")}. Stop suggestion: {q.SuggestionText}", 9);
        pdf.Chart(ChartOf(q, BenchmarkReport.ChartLayer(benchmarks)));

        var numbers = new HashSet<int> { 1, 2, 3, 4, 5, 6, 7, 8, 9 };
        foreach (var r in rounds)
        {
            var rows = new List<IReadOnlyList<string>>();
            foreach (var p in q.Periods)
            {
                var rr = p.Rounds.FirstOrDefault(x => x.Round == r.Number);
                if (rr is null)
                {
                    continue;
                }
                var h = rr.Feedback.Headline;
                rows.Add(h is null
                    ? [p.Period, N(rr.Feedback.N), "withheld", "", "", "", "", "", "", ""]
                    : [p.Period, N(h.N), F(h.Median, q.Decimals), F(h.Q1, q.Decimals), F(h.Q3, q.Decimals), F(h.TrimmedMedian, q.Decimals),
                        Pct(h.RelativeIqr), rr.Stability is { } s ? Pct(s.ShareMoved) : "–", rr.Stability?.Wilcoxon is { } w ? NumberText.Format(w.PValue, "0.000") : "–",
                        N(h.Excluded)]);
            }
            if (rows.Count == 0)
            {
                continue;
            }
            pdf.Paragraph($"Round {r.Number}" + (q.Format == ResponseFormat.Range ? " (statistics of the P50s)" : ""), 9.5, bold: true);
            pdf.Table(["Period", "n", "Median", "Q1", "Q3", "Trimmed median", "Rel. IQR", "Moved", "Wilcoxon p", "Excluded"], rows,
                [1, 0.55, 1.2, 1.2, 1.2, 1.45, 1, 0.9, 1.35, 1.25], numbers);
        }

        var consensus = q.Periods.Where(p => p.Consensus is not null).ToList();
        if (consensus.Count > 0)
        {
            pdf.Paragraph("Published consensus", 9.5, bold: true);
            pdf.Table(["Period", "Consensus", "Low", "High", "Band", "n", "Method"],
                consensus.Select(p => (IReadOnlyList<string>)[p.Period, F(p.Consensus!.Value, q.Decimals), F(p.Consensus.Low, q.Decimals), F(p.Consensus.High, q.Decimals),
                    ConsensusExport.BandOf(q.Format), N(p.Consensus.N), Words.Method(p.Consensus.Method)]).ToList(),
                [1, 1.4, 1.4, 1.4, 1, 0.6, 1.6], new HashSet<int> { 1, 2, 3, 5 });
        }
        BenchmarkReport.Table(pdf, benchmarks);
        if (q.Rationales.Count > 0)
        {
            pdf.Paragraph($"Rationales from the last closed round ({Math.Min(RationalesPerQuestion, q.Rationales.Count)} of {q.Rationales.Count}, unattributed, in alphabetical order)", 9.5, bold: true);
            foreach (var text in q.Rationales.Take(RationalesPerQuestion))
            {
                pdf.Paragraph("• " + text, 8.5, indent: 8);
            }
        }
    }

    /// <summary>The question's chart: the reference history, each round's median with its Q1-Q3 band, and the consensus with its band.</summary>
    public static ChartModel ChartOf(QuestionResult q, IReadOnlyList<ChartSeries>? layers = null)
    {
        var series = new List<ChartSeries>();
        if (q.Reference.Count > 0)
        {
            series.Add(new("Observed history", SeriesKind.Line, "#555555", q.Reference.Select(r => new ChartPoint(Period.Parse(r.Period), r.Value)).ToList()));
        }
        var of = q.Format == ResponseFormat.Range ? "median of the P50s and their Q1-Q3" : "median and Q1-Q3";
        var roundNumbers = q.Periods.SelectMany(p => p.Rounds).Select(r => r.Round).Distinct().Order().ToList();
        foreach (var n in roundNumbers)
        {
            var points = q.Periods.Select(p => (p.Period, Round: p.Rounds.FirstOrDefault(r => r.Round == n)))
                .Where(x => x.Round?.Feedback.Headline is not null)
                .Select(x => new ChartPoint(Period.Parse(x.Period), x.Round!.Feedback.Headline!.Median, x.Round.Feedback.Headline.Q1, x.Round.Feedback.Headline.Q3)).ToList();
            if (points.Count > 0)
            {
                series.Add(new ChartSeries($"Round {n}: {of}", SeriesKind.Band, RoundColours[(n - 1) % RoundColours.Length], points));
            }
        }
        var consensus = q.Periods.Where(p => p.Consensus is not null)
            .Select(p => new ChartPoint(Period.Parse(p.Period), p.Consensus!.Value, p.Consensus.Low, p.Consensus.High)).ToList();
        if (consensus.Count > 0)
        {
            series.Add(new ChartSeries($"Consensus and {ConsensusExport.BandOf(q.Format)} band", SeriesKind.Band, "#d95f02", consensus));
            series.Add(new ChartSeries("Consensus path", SeriesKind.Line, "#d95f02", consensus.Select(c => c with { Low = null, High = null }).ToList(), Dashed: true));
        }
        series.AddRange(layers ?? []);
        return new ChartModel(q.Label, q.Unit, q.Decimals, series);
    }

    /// <summary>
    /// The calibration questions: what they are for, whether the consensus used their weights, the questions with their
    /// true values once recorded, and each panel code's hits, scores and weight as of the dossier's date.
    /// </summary>
    private static void CalibrationSection(PdfReport pdf, Panel panel, PanelCalibrationView v, IReadOnlyList<QuestionResult> consensusQuestions, DateTime now)
    {
        pdf.NewPage();
        pdf.Heading("Calibration questions", 2);
        pdf.Paragraph("These questions ask about figures whose true value the facilitator knew, or learnt soon after the round closed. "
            + "They score each expert early, for statistical accuracy (calibration: do the true values fall in the expert's P10-P50-P90 bins "
            + "as often as claimed?) and informativeness (information: how narrow are the bands?), on the classical model of structured "
            + "expert judgment (R. M. Cooke, Experts in Uncertainty, Oxford University Press, 1991, chapter 12). They take no part in the "
            + "consensus, the exports or the long-horizon scorecard, and the experts were not told which questions they are.", 9);
        var methods = consensusQuestions.SelectMany(q => q.Periods).Select(p => p.Consensus?.Method).OfType<string>().ToList();
        var applied = methods.Any(m => m.StartsWith("Calibration", StringComparison.Ordinal));
        var weighting = applied
            ? "Weighting applied: the published consensus uses the calibration-question weights below (the weighted linear pool of the experts' "
                + "distributions for Range questions, the weighted median for Point questions)."
            : panel.Settings.Weighting == ConsensusWeighting.Calibration
                ? (methods.Count > 0
                    ? "Weighting not applied: the panel asks for calibration-question weights, but no expert had a positive weight when the consensus was published, so it uses equal weights."
                    : "The panel asks for calibration-question weights; no consensus is published yet.")
                : $"Weighting not applied: the consensus uses {Words.Weighting(panel.Settings.Weighting)}; the weights below are shown for information.";
        pdf.Paragraph(weighting, 9.5, bold: true);

        pdf.Table(["Question", "Period", "Unit", "True value", "Recorded (UTC)", "Answers"],
            v.Questions.Select(q => (IReadOnlyList<string>)[q.Label, q.Period, q.Unit,
                q.TrueValue is { } t ? F(t, q.Decimals) : "not yet known", q.TrueValueRecordedAt is { } at ? $"{at:yyyy-MM-dd}" : "–", N(q.Answers)]).ToList(),
            [3.2, 0.9, 1.1, 1.2, 1.2, 0.9], new HashSet<int> { 3, 5 });

        var s = v.Settings;
        pdf.Paragraph($"Scored on round {(s.RoundNumber is { } r ? N(r) : "–")} ({(s.Round == "first" ? "round 1, by the panel's setting" : "the final closed round")}), "
            + $"with the true values recorded by {now:yyyy-MM-dd HH:mm} UTC; {N(v.TruthsRecorded)} of {N(v.Questions.Count)} true values recorded. "
            + $"Bins below P10, P10-P50, P50-P90 and above P90 with probabilities 0.1, 0.4, 0.4, 0.1; overshoot {Pct(s.Overshoot)} of the intrinsic range on each side; "
            + (s.FixedCutoff is { } fixedCutoff ? $"cut-off fixed at {Score(fixedCutoff)}." : $"cut-off optimised{(s.CutoffUsed is { } used ? $" (α = {Score(used)})" : "")}."), 8.5);
        if (v.Status is { } status)
        {
            pdf.Paragraph(status, 9, colour: "#555555");
            return;
        }

        var rows = v.Experts.Select(e => (IReadOnlyList<string>)[e.PanelCode, N(e.N), string.Join(" · ", e.Hits), Score(e.Calibration), Score(e.Information), Score(e.Weight)]).ToList();
        foreach (var c in new[] { v.Weighted, v.Equal }.OfType<CombinationLine>())
        {
            rows.Add([c.Name == "weighted" ? "Weighted combination" : "Equal-weight combination", N(c.N), string.Join(" · ", c.Hits), Score(c.Calibration), Score(c.Information), $"(combined {Score(c.Combined)})"]);
        }
        pdf.Table(["Panel code", "N", "Hits <P10 · P10-P50 · P50-P90 · >P90", "Calibration", "Information", "Weight"], rows,
            [1.6, 0.5, 2.2, 1.1, 1.1, 1.3], new HashSet<int> { 1, 3, 4, 5 });
        var n = v.Experts.Select(e => e.N).DefaultIfEmpty(0).Max();
        pdf.Paragraph($"Calibration scores from fewer than about 8-10 questions carry little evidence; here N is at most {N(n)}.", 8.5, colour: n < 8 ? "#b00020" : "#555555");
    }

    /// <summary>A score or weight: three decimals, or scientific notation below 0.001.</summary>
    private static string Score(double v) => v.ToString(v != 0 && Math.Abs(v) < 0.001 ? "0.00E+0" : "0.000", CultureInfo.InvariantCulture);

    private static void Appendix(PdfReport pdf, Panel panel)
    {
        pdf.NewPage();
        pdf.Heading("Method appendix", 2);
        pdf.Table(["Statistic", "Definition and published source"],
        [
            ["Quantiles (median, Q1, Q3)", "Linear interpolation between order statistics: R. J. Hyndman and Y. Fan, \"Sample quantiles in statistical packages\", The American Statistician 50 (1996), type 7."],
            ["Outlier rule", Words.OutlierRule(panel.Settings.OutlierRule) + ". Tukey fences: J. W. Tukey, Exploratory Data Analysis (1977); modified z-score: B. Iglewicz and D. Hoaglin, How to Detect and Handle Outliers (1993)."],
            ["Trimmed median", "The median of the answers the outlier rule retains; the number of excluded answers is shown per round."],
            ["Relative IQR and consensus", "IQR / |median|; consensus when it is at most the panel's threshold with enough answers. H. von der Gracht, \"Consensus measurement in Delphi studies\", Technological Forecasting and Social Change 79 (2012)."],
            ["Moved share", "The share of experts whose answer moved by more than the panel's move threshold between consecutive rounds."],
            ["Wilcoxon p", "The Wilcoxon signed-rank test of paired answers between rounds (exact for small n, normal approximation with tie correction above): F. Wilcoxon, Biometrics Bulletin 1 (1945)."],
            ["Range consensus", "Quantile averaging of the experts' P10, P50 and P90 (trimmed, or weighted by track record)."],
            .. panel.Questions.Any(q => q.IsCalibration)
                ? new IReadOnlyList<string>[]
                {
                    ["Calibration and information", "Calibration 1 − F(2·N·I(s, p)) with F the chi-square distribution with 3 degrees of freedom; information against a uniform (or log-uniform) background on the intrinsic range; weight calibration × information above the cut-off: R. M. Cooke, Experts in Uncertainty (1991), chapter 12."],
                }
                : [],
        ], [1, 3]);
        var s = panel.Settings;
        pdf.Paragraph("Settings of this panel", 9.5, bold: true);
        pdf.Table(["Setting", "Value"],
        [
            ["Outlier rule", Words.OutlierRule(s.OutlierRule)],
            ["Trim fraction", NumberText.Format(s.TrimFraction, "0.00")],
            ["Consensus threshold (relative IQR)", Pct(s.ConsensusThreshold)],
            ["Move threshold", Pct(s.StabilityThreshold)],
            ["Round cap", N(s.RoundCap)],
            ["Minimum group size for feedback", N(s.MinimumGroupSize)],
            ["Rationales shown to experts", s.ShowRationales ? "yes" : "no"],
            ["Answers outside the usual range must be justified", s.OutliersMustJustify ? "yes" : "no"],
            ["Consensus weighting", Words.Weighting(s.Weighting)],
        ], [2, 3]);
    }

    private static void AuditTrail(PdfReport pdf, IReadOnlyList<AuditEvent> audit)
    {
        pdf.Heading("Audit trail", 2);
        var states = audit.Where(a => !a.Action.StartsWith("mail.", StringComparison.Ordinal) && !a.Action.StartsWith("link.", StringComparison.Ordinal)).ToList();
        pdf.Table(["When (UTC)", "Who", "What"],
            states.Select(a => (IReadOnlyList<string>)[$"{a.At:yyyy-MM-dd HH:mm}", a.Actor, a.Action]).ToList(), [1.3, 2.2, 2]);
        var links = audit.Count(a => a.Action.StartsWith("link.", StringComparison.Ordinal));
        var mails = audit.Count(a => a.Action.StartsWith("mail.", StringComparison.Ordinal));
        pdf.Paragraph($"Not listed: {links} personal-link events and {mails} mail events (in the audit log).", 8.5, colour: "#555555");
    }

    private static void Interests(PdfReport pdf, IReadOnlyList<string?> declared)
    {
        pdf.Heading("Declared interests", 2);
        // "None declared" and the like are declarations of no interest (common practice in registers of interests).
        var given = declared.Where(d => !string.IsNullOrWhiteSpace(d) && !NoInterest().IsMatch(d.Trim()))
            .Select(d => d!.Trim()).Order(StringComparer.Ordinal).ToList();
        pdf.Paragraph($"{given.Count} of {declared.Count} experts declared an interest. Listed without names, in alphabetical order:", 9);
        foreach (var d in given)
        {
            pdf.Paragraph("• " + d, 8.5, indent: 8);
        }
    }

    private static string F(double v, int decimals) => NumberText.Fixed(v, decimals);

    private static string N(int v) => v.ToString(CultureInfo.InvariantCulture);

    private static string Pct(double? v) => NumberText.Percent(v, 1);
}
