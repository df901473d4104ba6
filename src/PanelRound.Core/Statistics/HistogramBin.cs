namespace PanelRound.Core.Statistics;

/// <summary>One histogram bin: answers x with <see cref="Lower"/> ≤ x &lt; <see cref="Upper"/> (the last bin also includes <see cref="Upper"/>).</summary>
/// <param name="Lower">The inclusive lower edge.</param>
/// <param name="Upper">The upper edge: exclusive, except for the last bin, where it is the maximum and inclusive.</param>
/// <param name="Count">The number of answers in the bin.</param>
public sealed record HistogramBin(double Lower, double Upper, int Count);
