namespace PanelRound.Core.Domain;

/// <summary>
/// Which answers count in a round: the one rule behind the round feedback, the consensus and the
/// scorecard. Of the submitted (not draft) answers, the latest revision of each membership to each
/// question-period counts, unless the membership's link was revoked while the round was open.
/// </summary>
/// <remarks>
/// A revocation after a round closed does not rewrite that round: its frozen feedback and its
/// consensus already took the answers. A revocation while the round is open removes the member's
/// answers from it (the facilitator's way to exclude an answer before the round closes).
/// </remarks>
public static class AnswerCounting
{
    /// <summary>Whether a membership's answers count in a round.</summary>
    /// <param name="revoked">True when the membership's link is revoked now.</param>
    /// <param name="revokedAt">When it was revoked (null when it never was).</param>
    /// <param name="roundClosedAt">When the round closed; null while it is open.</param>
    /// <returns>True when the membership is not revoked, or was revoked after the round closed.</returns>
    public static bool AnswersCount(bool revoked, DateTime? revokedAt, DateTime? roundClosedAt) =>
        !revoked || (roundClosedAt is { } closed && revokedAt > closed);

    /// <summary>The revision that counts of each group of revisions: the latest one, by its increasing id.</summary>
    /// <typeparam name="T">An answer.</typeparam>
    /// <typeparam name="TKey">What makes answers revisions of one another: membership, question and period (and round, when several are mixed).</typeparam>
    /// <param name="submitted">Submitted answers, in any order.</param>
    /// <param name="key">The revision key of an answer.</param>
    /// <param name="id">The answer's id, increasing with every new revision.</param>
    public static IEnumerable<T> LatestRevisions<T, TKey>(IEnumerable<T> submitted, Func<T, TKey> key, Func<T, long> id)
    {
        ArgumentNullException.ThrowIfNull(submitted);
        ArgumentNullException.ThrowIfNull(key);
        ArgumentNullException.ThrowIfNull(id);
        return submitted.GroupBy(key).Select(g => g.MaxBy(id)!);
    }
}
