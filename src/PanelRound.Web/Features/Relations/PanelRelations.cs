using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Core.Relations;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Rounds;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Relations;

/// <summary>
/// Relations between three questions of a panel: declared by the facilitator; checked on the consensus per
/// period (results page), on each expert's own answers per panel code (staff), and as a private note to
/// an expert whose own answers imply a value outside a question's plausible range (that expert only).
/// </summary>
public sealed class PanelRelations(PanelRoundDbContext db, TimeProvider clock)
{
    private static readonly RelationRole[] Roles = [RelationRole.Result, RelationRole.First, RelationRole.Second];

    public async Task<IReadOnlyList<QuestionRelation>?> ListAsync(int panelId)
    {
        if (!await db.Panels.AnyAsync(p => p.Id == panelId))
        {
            return null;
        }
        return await db.Relations.AsNoTracking().Where(r => r.PanelId == panelId).OrderBy(r => r.Id).ToListAsync();
    }

    public async Task<Result<QuestionRelation>> AddAsync(int panelId, RelationInput? input, string actor)
    {
        var panel = await db.Panels.Include(p => p.Questions).ThenInclude(q => q.Indicator).FirstOrDefaultAsync(p => p.Id == panelId);
        if (panel is null)
        {
            return Result<QuestionRelation>.NotFound($"Panel {panelId} does not exist.");
        }
        if (panel.State == PanelState.Concluded)
        {
            return Result<QuestionRelation>.Conflict("The panel has concluded; its relations are fixed.");
        }
        var errors = new FieldErrors();
        var relation = new QuestionRelation { PanelId = panelId, CreatedAt = clock.GetUtcNow().UtcDateTime };
        if (input?.Shape is not { } shapeText || !Enum.TryParse<RelationShape>(shapeText, ignoreCase: true, out var shape) || !Enum.IsDefined(shape)
            || int.TryParse(shapeText, out _))
        {
            errors.Add("shape", "Shape is Product (result = first × second) or Sum (result = first + second).");
        }
        else
        {
            relation.Shape = shape;
        }
        var asked = new List<int>();
        void Term(string field, RelationTermInput? t, Action<int?, string, string, double> set)
        {
            t ??= new RelationTermInput();
            Question? q = null;
            if (t.QuestionId is { } qid)
            {
                q = panel.Questions.FirstOrDefault(x => x.Id == qid);
                if (q is null)
                {
                    errors.Add($"{field}.questionId", $"Question {qid} is not a question of this panel.");
                }
                else if (asked.Contains(qid))
                {
                    errors.Add($"{field}.questionId", "A question can stand for one term of a relation only.");
                }
                else
                {
                    asked.Add(qid);
                }
            }
            var label = string.IsNullOrWhiteSpace(t.Label) ? q?.Label : t.Label.Trim();
            if (string.IsNullOrWhiteSpace(label))
            {
                errors.Add($"{field}.label", "Name the term (a derived term has no question to take its name from).");
            }
            else if (label.Length > FieldLengths.Title)
            {
                errors.Add($"{field}.label", $"The name is at most {FieldLengths.Title} characters.");
            }
            var unit = t.Unit?.Trim() ?? q?.Indicator?.UnitLabel ?? "";
            if (unit.Length > FieldLengths.UnitLabel)
            {
                errors.Add($"{field}.unit", $"The unit is at most {FieldLengths.UnitLabel} characters.");
            }
            var factor = t.Factor ?? 1;
            if (!double.IsFinite(factor) || factor <= 0 || factor > 1e9)
            {
                errors.Add($"{field}.factor", "The unit factor is a positive number up to 1e9 (base value = value × factor; 0.01 for a value in %).");
            }
            set(q?.Id, label ?? "", unit, factor);
        }
        Term("result", input?.Result, (q, l, u, f) => (relation.ResultQuestionId, relation.ResultLabel, relation.ResultUnit, relation.ResultFactor) = (q, l, u, f));
        Term("first", input?.First, (q, l, u, f) => (relation.FirstQuestionId, relation.FirstLabel, relation.FirstUnit, relation.FirstFactor) = (q, l, u, f));
        Term("second", input?.Second, (q, l, u, f) => (relation.SecondQuestionId, relation.SecondLabel, relation.SecondUnit, relation.SecondFactor) = (q, l, u, f));
        if (!errors.Any && asked.Count < 2)
        {
            errors.Add("result.questionId", "At least two of the three terms must be questions of the panel.");
        }
        if (errors.Any)
        {
            return Result<QuestionRelation>.Invalid(errors);
        }
        db.Relations.Add(relation);
        await db.SaveChangesAsync();
        Audit.Record(db, actor, "RelationDeclared", nameof(QuestionRelation), relation.Id, panelId, new { Formula = RelationDto.FormulaOf(relation) }, clock.GetUtcNow().UtcDateTime);
        await db.SaveChangesAsync();
        return Result<QuestionRelation>.Ok(relation);
    }

    public async Task<Result<QuestionRelation>> RemoveAsync(int panelId, int relationId, string actor)
    {
        var relation = await db.Relations.FirstOrDefaultAsync(r => r.Id == relationId && r.PanelId == panelId);
        if (relation is null)
        {
            return Result<QuestionRelation>.NotFound($"Relation {relationId} of panel {panelId} does not exist.");
        }
        if (await db.Panels.AnyAsync(p => p.Id == panelId && p.State == PanelState.Concluded))
        {
            // The published consensus and dossier carry this relation's checks: they stay as published.
            return Result<QuestionRelation>.Conflict("The panel has concluded; its relations are fixed.");
        }
        db.Relations.Remove(relation);
        Audit.Record(db, actor, "RelationRemoved", nameof(QuestionRelation), relation.Id, panelId, new { Formula = RelationDto.FormulaOf(relation) }, clock.GetUtcNow().UtcDateTime);
        await db.SaveChangesAsync();
        return Result<QuestionRelation>.Ok(relation);
    }

    /// <summary>
    /// Each relation on the consensus of a panel's results: per period, the published consensus where it
    /// exists, else the last round's trimmed median (of the P50s for Range questions).
    /// </summary>
    public static IReadOnlyList<RelationConsensusCheck> OnConsensus(IReadOnlyList<QuestionRelation> relations, PanelResultsView view)
    {
        var values = new Dictionary<(int, string), double>();
        foreach (var q in view.Questions)
        {
            foreach (var p in q.Periods)
            {
                var v = p.Consensus?.Value ?? p.Rounds.LastOrDefault(r => r.Feedback.Headline is not null)?.Feedback.Headline?.TrimmedMedian;
                if (v is { } x && double.IsFinite(x))
                {
                    values[(q.QuestionId, p.Period)] = x;
                }
            }
        }
        var periods = view.Questions.SelectMany(q => q.Periods.Select(p => p.Period)).Distinct().OrderBy(p => Period.Parse(p)).ToList();
        return relations.Select(r =>
        {
            var checks = Check(r, periods, (q, p) => values.TryGetValue((q, p), out var v) ? v : null, view.Settings.RelationTolerance);
            var derivedRole = DerivedRole(r);
            var derived = derivedRole is { } role
                ? checks.Select(c => (c.Period, Value: role switch { RelationRole.Result => c.Result, RelationRole.First => c.First, _ => c.Second }))
                    .Where(x => x.Value is not null).Select(x => new DerivedPoint(x.Period, x.Value!.Value)).ToList()
                : [];
            return new RelationConsensusCheck(RelationDto.From(r), checks, derivedRole is { } d ? RoleName(d) : null, derived, view.Settings.RelationTolerance);
        }).ToList();
    }

    /// <summary>Each relation with all three terms asked, on each expert's own answers of a round, by panel code (staff only).</summary>
    public async Task<IReadOnlyList<(RelationDto Relation, IReadOnlyList<RelationCodeCheck> Codes)>> ByPanelCodeAsync(int panelId)
    {
        var panel = await db.Panels.AsNoTracking().Include(p => p.Rounds).FirstAsync(p => p.Id == panelId);
        var relations = await db.Relations.AsNoTracking().Where(r => r.PanelId == panelId).OrderBy(r => r.Id).ToListAsync();
        var round = panel.Rounds.OrderByDescending(r => r.Number).FirstOrDefault();
        if (round is null || relations.Count == 0)
        {
            return [];
        }
        var answers = await CountedAnswers.LoadAsync(db, round.Id);
        var codes = await db.Memberships.AsNoTracking().Where(m => m.PanelId == panelId).ToDictionaryAsync(m => m.Id, m => m.PanelCode);
        return ByPanelCode(relations, answers, codes, panel.Settings.RelationTolerance);
    }

    /// <summary>The checks by panel code of a panel already read (see the other overload).</summary>
    public async Task<IReadOnlyList<(RelationDto Relation, IReadOnlyList<RelationCodeCheck> Codes)>> ByPanelCodeAsync(PanelSnapshot snapshot)
    {
        ArgumentNullException.ThrowIfNull(snapshot);
        var round = snapshot.Rounds.Count > 0 ? snapshot.Rounds[^1] : null;
        var relations = await snapshot.RelationsAsync();
        if (round is null || relations.Count == 0)
        {
            return [];
        }
        return ByPanelCode(relations, snapshot.AnswersOf(round), snapshot.Codes, snapshot.Panel.Settings.RelationTolerance);
    }

    private static IReadOnlyList<(RelationDto Relation, IReadOnlyList<RelationCodeCheck> Codes)> ByPanelCode(
        IReadOnlyList<QuestionRelation> relations, IReadOnlyList<CountedAnswer> answers, IReadOnlyDictionary<int, string> codes, double tolerance)
    {
        var periods = answers.Select(a => a.Period).Distinct().OrderBy(p => Period.Parse(p)).ToList();
        return relations.Where(r => DerivedRole(r) is null).Select(r => (RelationDto.From(r), (IReadOnlyList<RelationCodeCheck>)answers.GroupBy(a => a.MembershipId)
            .Select(g =>
            {
                var own = g.ToDictionary(a => (a.QuestionId, a.Period), a => a.Headline);
                return new RelationCodeCheck(codes.GetValueOrDefault(g.Key, "?"),
                    Check(r, periods, (q, p) => own.TryGetValue((q, p), out var v) && double.IsFinite(v) ? v : null, tolerance)
                        .Where(c => c.ImpliedResult is not null).ToList());
            })
            .Where(c => c.Periods.Count > 0).OrderBy(c => c.PanelCode, StringComparer.Ordinal).ToList())).ToList();
    }

    /// <summary>
    /// The private notes of one membership: from round 2 on, for each relation question with a plausible
    /// range, the value implied by this expert's own answers to the other two terms (this round's answer
    /// where given, else the previous round's), where it lies outside that range. Only the membership's own
    /// answers are read.
    /// </summary>
    public async Task<IReadOnlyList<PrivateRelationNote>> PrivateNotesAsync(int membershipId)
    {
        var m = await db.Memberships.AsNoTracking().SingleAsync(x => x.Id == membershipId);
        var panel = await db.Panels.AsNoTracking().Include(p => p.Questions).ThenInclude(q => q.Indicator).Include(p => p.Rounds).SingleAsync(p => p.Id == m.PanelId);
        var relations = await db.Relations.AsNoTracking().Where(r => r.PanelId == panel.Id).ToListAsync();
        var rounds = panel.Rounds.OrderByDescending(r => r.Number).Take(2).ToList();
        if (relations.Count == 0 || rounds.Count == 0 || rounds[0].Number < 2)
        {
            return [];
        }
        var own = new Dictionary<(int, string), double>();
        foreach (var round in rounds.AsEnumerable().Reverse())
        {
            var estimates = await db.Estimates.AsNoTracking().Where(e => e.RoundId == round.Id && e.MembershipId == membershipId && !e.IsDraft)
                .OrderBy(e => e.Id).ToListAsync();
            foreach (var e in estimates)
            {
                var v = e.Value ?? e.P50;
                if (v is { } x && double.IsFinite(x))
                {
                    own[(e.QuestionId, e.Period)] = x;
                }
            }
        }
        var questions = panel.Questions.ToDictionary(q => q.Id);
        var notes = new List<PrivateRelationNote>();
        foreach (var r in relations)
        {
            var core = RelationDto.ToCore(r);
            var ids = QuestionIds(r);
            foreach (var period in own.Keys.Select(k => k.Item2).Distinct().OrderBy(p => Period.Parse(p)))
            {
                double? Value(RelationRole role) => ids[role] is { } q && own.TryGetValue((q, period), out var v) ? v : null;
                var values = new RelationValues(Value(RelationRole.Result), Value(RelationRole.First), Value(RelationRole.Second));
                foreach (var role in Roles)
                {
                    if (ids[role] is not { } qid || !questions.TryGetValue(qid, out var q) || (q.PlausibleMin is null && q.PlausibleMax is null))
                    {
                        continue;
                    }
                    var others = Roles.Where(x => x != role).ToList();
                    if (others.Any(o => values.Of(o) is null) || core.Implied(role, values) is not { } implied)
                    {
                        continue;
                    }
                    if ((q.PlausibleMin is { } lo && implied < lo) || (q.PlausibleMax is { } hi && implied > hi))
                    {
                        var d = q.Indicator!.Decimals;
                        var range = FormattableString.Invariant($"{Num(q.PlausibleMin, d)} to {Num(q.PlausibleMax, d)}");
                        var text = $"Your own answers for {period} ({string.Join(" and ", others.Select(o => $"{core.Term(o).Label} {Num(values.Of(o), questions.GetValueOrDefault(ids[o] ?? 0)?.Indicator?.Decimals ?? 2)}"))}) "
                            + $"imply {q.Label} of {Num(implied, d)} {q.Indicator.UnitLabel}, outside its plausible range of {range} {q.Indicator.UnitLabel}. "
                            + "You may wish to check these answers; only you see this note.";
                        notes.Add(new PrivateRelationNote(qid, q.Label, period, implied, q.PlausibleMin, q.PlausibleMax, q.Indicator.UnitLabel, text));
                    }
                }
            }
        }
        return notes;
    }

    /// <summary>The role without a question, if any.</summary>
    public static RelationRole? DerivedRole(QuestionRelation r) =>
        r.ResultQuestionId is null ? RelationRole.Result : r.FirstQuestionId is null ? RelationRole.First : r.SecondQuestionId is null ? RelationRole.Second : null;

    public static string RoleName(RelationRole role) => role switch
    {
        RelationRole.Result => "result",
        RelationRole.First => "first",
        _ => "second",
    };

    private static Dictionary<RelationRole, int?> QuestionIds(QuestionRelation r) => new()
    {
        [RelationRole.Result] = r.ResultQuestionId,
        [RelationRole.First] = r.FirstQuestionId,
        [RelationRole.Second] = r.SecondQuestionId,
    };

    /// <summary>Per period: the three values (a derived term filled with its implied value) and the check of the result against first ∘ second.</summary>
    private static List<RelationPeriodCheck> Check(QuestionRelation r, IReadOnlyList<string> periods, Func<int, string, double?> valueOf, double tolerance)
    {
        var core = RelationDto.ToCore(r);
        var ids = QuestionIds(r);
        var derived = DerivedRole(r);
        var result = new List<RelationPeriodCheck>();
        foreach (var period in periods)
        {
            double? V(RelationRole role) => ids[role] is { } q ? valueOf(q, period) : null;
            var values = new RelationValues(V(RelationRole.Result), V(RelationRole.First), V(RelationRole.Second));
            if (derived is { } d)
            {
                var implied = core.Implied(d, values);
                if (implied is null)
                {
                    continue;
                }
                values = d switch
                {
                    RelationRole.Result => values with { Result = implied },
                    RelationRole.First => values with { First = implied },
                    _ => values with { Second = implied },
                };
                result.Add(new RelationPeriodCheck(period, values.Result, values.First, values.Second, core.Implied(RelationRole.Result, values), 0, false));
                continue;
            }
            if (values.Result is null && values.First is null && values.Second is null)
            {
                continue;
            }
            var check = core.Check(values, tolerance);
            result.Add(new RelationPeriodCheck(period, values.Result, values.First, values.Second, check?.Implied, check?.RelativeDifference, check?.Flagged ?? false));
        }
        return result;
    }

    private static string Num(double? v, int decimals) => NumberText.Fixed(v, Math.Clamp(decimals, 0, 6));
}
