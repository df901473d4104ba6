namespace PanelRound.Core.Forecasting;

/// <summary>The trend of an exponential smoothing method.</summary>
public enum TrendKind
{
    /// <summary>No trend: simple exponential smoothing (FPP3 §8.1).</summary>
    None,

    /// <summary>Additive trend: Holt's linear method (FPP3 §8.2).</summary>
    Linear,

    /// <summary>Additive damped trend (FPP3 §8.2).</summary>
    Damped,
}

/// <summary>Smoothing parameters and initial states of an exponential smoothing method.</summary>
/// <param name="Alpha">α, the level's smoothing parameter.</param>
/// <param name="BetaStar">β*, the trend's smoothing parameter in the component form of FPP3 §8.2; 0 without trend.</param>
/// <param name="Phi">φ, the damping parameter; 1 for Holt's linear method and without trend.</param>
/// <param name="Level0">ℓ₀, the level before the first observation.</param>
/// <param name="Trend0">b₀, the trend before the first observation; 0 without trend.</param>
public sealed record SmoothingParameters(double Alpha, double BetaStar, double Phi, double Level0, double Trend0);

/// <summary>The box in which the smoothing parameters are estimated; each pair is [min, max], inclusive.</summary>
/// <remarks>
/// The defaults follow FPP3: 0 &lt; α &lt; 1 and 0 &lt; β* &lt; 1 (§8.1 and §8.2, kept a hair inside the open
/// interval), and 0.8 ≤ φ ≤ 0.98 (§8.2: "in practice, φ is rarely less than 0.8 ... and is usually
/// restricted to a maximum of 0.98"). Initial states are unrestricted.
/// </remarks>
public sealed record SmoothingBounds
{
    /// <summary>The defaults of the remarks.</summary>
    public static SmoothingBounds Default { get; } = new();

    /// <summary>Bounds of α.</summary>
    public (double Min, double Max) Alpha { get; init => field = Check(value, nameof(Alpha)); } = (1e-4, 0.9999);

    /// <summary>Bounds of β*.</summary>
    public (double Min, double Max) BetaStar { get; init => field = Check(value, nameof(BetaStar)); } = (1e-4, 0.9999);

    /// <summary>Bounds of φ.</summary>
    public (double Min, double Max) Phi { get; init => field = Check(value, nameof(Phi)); } = (0.8, 0.98);

    private static (double, double) Check((double Min, double Max) value, string name)
    {
        Preconditions.CheckInRange(value.Min, 0, 1, name);
        Preconditions.CheckInRange(value.Max, value.Min, 1, name);
        return value;
    }
}

/// <summary>A run of the recursions over a series with given parameters.</summary>
/// <param name="OneStepForecasts">ŷ_{t|t−1} for t = 1..T.</param>
/// <param name="Errors">e_t = y_t − ŷ_{t|t−1}.</param>
/// <param name="Sse">Σ e_t².</param>
/// <param name="Level">ℓ_T.</param>
/// <param name="Trend">b_T (0 without trend).</param>
public sealed record SmoothingRun(IReadOnlyList<double> OneStepForecasts, IReadOnlyList<double> Errors, double Sse, double Level, double Trend);

/// <summary>
/// Simple exponential smoothing, Holt's linear trend and the damped trend method: recursions,
/// point forecasts, forecast variances and parameter estimation by least squares.
/// </summary>
/// <remarks>
/// <para>Component form (FPP3 §8.2, damped trend; φ = 1 gives Holt's method, and b ≡ 0 gives simple exponential smoothing, §8.1):
/// ŷ_{t+h|t} = ℓ_t + (φ + φ² + … + φ^h)·b_t; ℓ_t = α·y_t + (1 − α)(ℓ_{t−1} + φ·b_{t−1});
/// b_t = β*(ℓ_t − ℓ_{t−1}) + (1 − β*)·φ·b_{t−1}.</para>
/// <para>Estimation: α, β*, φ, ℓ₀ and b₀ minimise the sum of squared one-step errors Σ(y_t − ŷ_{t|t−1})²
/// (FPP3 §8.1, "Optimisation"), within <see cref="SmoothingBounds"/>. Implementation note: the
/// one-step errors are affine in (ℓ₀, b₀) for fixed smoothing parameters, so the initial states are
/// solved exactly by linear least squares and only α, β*, φ are searched (a grid, then Nelder–Mead
/// projected onto the box).</para>
/// <para>Forecast variance: the additive-error state space models ETS(A,N,N), ETS(A,A,N) and
/// ETS(A,Ad,N), whose point forecasts equal these methods' (FPP3 §8.5), have
/// σ_h² = σ²·v_h with v_h from the table of forecast variance expressions in FPP3 §8.7, where
/// β = α·β*. σ̂² = SSE / (T − K), K the number of estimated parameters including the initial
/// states (FPP3 §5.5).</para>
/// </remarks>
public static class ExponentialSmoothing
{
    /// <summary>Runs the recursions over <paramref name="series"/> (oldest first, finite).</summary>
    public static SmoothingRun Run(IReadOnlyList<double> series, TrendKind trend, SmoothingParameters parameters)
    {
        Preconditions.CheckAllFinite(series);
        ArgumentNullException.ThrowIfNull(parameters);
        var p = Normalise(trend, parameters);
        var forecasts = new double[series.Count];
        var errors = new double[series.Count];
        double level = p.Level0, slope = p.Trend0, sse = 0;
        for (var t = 0; t < series.Count; t++)
        {
            var f = level + (p.Phi * slope);
            var previousLevel = level;
            forecasts[t] = f;
            errors[t] = series[t] - f;
            sse += errors[t] * errors[t];
            level = (p.Alpha * series[t]) + ((1 - p.Alpha) * f);
            slope = (p.BetaStar * (level - previousLevel)) + ((1 - p.BetaStar) * p.Phi * slope);
        }

        return new SmoothingRun(forecasts, errors, sse, level, slope);
    }

    /// <summary>ŷ_{T+h|T} = ℓ_T + (φ + … + φ^h)·b_T for h = 1..<paramref name="horizon"/>.</summary>
    public static IReadOnlyList<double> PointForecasts(SmoothingRun run, TrendKind trend, SmoothingParameters parameters, int horizon)
    {
        ArgumentNullException.ThrowIfNull(run);
        Preconditions.CheckInRange(horizon, 0, 10_000);
        var p = Normalise(trend, parameters);
        var result = new double[horizon];
        double damping = 0, power = 1;
        for (var h = 1; h <= horizon; h++)
        {
            power *= p.Phi;
            damping += power;
            result[h - 1] = run.Level + (damping * run.Trend);
        }

        return result;
    }

    /// <summary>
    /// v_h = σ_h² / σ², the forecast variance relative to the one-step variance, FPP3 §8.7 (table of forecast
    /// variance expressions for the additive state space models), with β = α·β*:
    /// ETS(A,N,N): 1 + α²(h − 1);
    /// ETS(A,A,N): 1 + (h − 1)[α² + αβh + β²h(2h − 1)/6];
    /// ETS(A,Ad,N): 1 + α²(h − 1) + βφh/(1 − φ)²·[2α(1 − φ) + βφ] − βφ(1 − φ^h)/((1 − φ)²(1 − φ²))·[2α(1 − φ²) + βφ(1 + 2φ − φ^h)].
    /// </summary>
    public static double RelativeForecastVariance(TrendKind trend, SmoothingParameters parameters, int h)
    {
        Preconditions.CheckInRange(h, 1, 10_000);
        var p = Normalise(trend, parameters);
        var a = p.Alpha;
        var b = p.Alpha * p.BetaStar;
        switch (trend)
        {
            case TrendKind.None:
                return 1 + (a * a * (h - 1));
            case TrendKind.Linear:
                return 1 + ((h - 1) * ((a * a) + (a * b * h) + (b * b * h * ((2 * h) - 1) / 6)));
            default:
                var phi = p.Phi;
                var phiH = Math.Pow(phi, h);
                var oneMinus = 1 - phi;
                return 1 + (a * a * (h - 1))
                    + (b * phi * h / (oneMinus * oneMinus) * ((2 * a * oneMinus) + (b * phi)))
                    - (b * phi * (1 - phiH) / (oneMinus * oneMinus * (1 - (phi * phi)))
                        * ((2 * a * (1 - (phi * phi))) + (b * phi * (1 + (2 * phi) - phiH))));
        }
    }

    /// <summary>The number of estimated parameters K, initial states included: 2, 4 or 5.</summary>
    public static int ParameterCount(TrendKind trend) => trend switch
    {
        TrendKind.None => 2,
        TrendKind.Linear => 4,
        _ => 5,
    };

    /// <summary>
    /// The parameters minimising the sum of squared one-step errors within <paramref name="bounds"/>;
    /// see the type's remarks. Deterministic.
    /// </summary>
    public static SmoothingParameters Fit(IReadOnlyList<double> series, TrendKind trend, SmoothingBounds? bounds = null)
    {
        Preconditions.CheckAllFinite(series);
        bounds ??= SmoothingBounds.Default;
        var y = series as double[] ?? [.. series];
        var dims = trend switch { TrendKind.None => 1, TrendKind.Linear => 2, _ => 3 };
        var lower = new[] { bounds.Alpha.Min, bounds.BetaStar.Min, bounds.Phi.Min }[..dims];
        var upper = new[] { bounds.Alpha.Max, bounds.BetaStar.Max, bounds.Phi.Max }[..dims];
        var scratch = new Scratch(y.Length);
        double Objective(double[] theta) => Profile(y, trend, theta, scratch).Sse;

        // A coarse grid picks the starting point, so that the local search starts in the right basin.
        double[] alphaGrid = [0.05, 0.2, 0.4, 0.6, 0.8, 0.95];
        double[] betaGrid = dims > 1 ? [0.02, 0.1, 0.3, 0.6] : [0];
        double[] phiGrid = dims > 2 ? [0.82, 0.9, 0.97] : [1];
        double[]? best = null;
        var bestSse = double.PositiveInfinity;
        foreach (var a in alphaGrid)
        {
            foreach (var b in betaGrid)
            {
                foreach (var f in phiGrid)
                {
                    var theta = Clamp(new[] { a, b, f }[..dims], lower, upper);
                    var sse = Objective(theta);
                    if (sse < bestSse)
                    {
                        bestSse = sse;
                        best = theta;
                    }
                }
            }
        }

        var optimum = NelderMead.Minimise(Objective, best!, lower, upper);
        return Profile(y, trend, optimum, scratch).Parameters;
    }

    /// <summary>Forces the unused parameters of a trend kind to their neutral values and checks the rest.</summary>
    internal static SmoothingParameters Normalise(TrendKind trend, SmoothingParameters parameters)
    {
        ArgumentNullException.ThrowIfNull(parameters);
        Preconditions.CheckInRange(parameters.Alpha, 0, 1, nameof(parameters.Alpha));
        Preconditions.CheckFinite(parameters.Level0, nameof(parameters.Level0));
        return trend switch
        {
            TrendKind.None => parameters with { BetaStar = 0, Phi = 1, Trend0 = 0 },
            TrendKind.Linear => parameters with
            {
                BetaStar = Preconditions.CheckInRange(parameters.BetaStar, 0, 1, nameof(parameters.BetaStar)),
                Phi = 1,
                Trend0 = Preconditions.CheckFinite(parameters.Trend0, nameof(parameters.Trend0)),
            },
            _ => parameters with
            {
                BetaStar = Preconditions.CheckInRange(parameters.BetaStar, 0, 1, nameof(parameters.BetaStar)),
                Phi = Preconditions.CheckInHalfOpenRange(parameters.Phi, 0, 1, nameof(parameters.Phi)),
                Trend0 = Preconditions.CheckFinite(parameters.Trend0, nameof(parameters.Trend0)),
            },
        };
    }

    private static double[] Clamp(double[] theta, double[] lower, double[] upper)
    {
        for (var i = 0; i < theta.Length; i++)
        {
            theta[i] = Math.Clamp(theta[i], lower[i], upper[i]);
        }

        return theta;
    }

    private sealed class Scratch(int n)
    {
        public double[] Base { get; } = new double[n];

        public double[] Level { get; } = new double[n];

        public double[] Slope { get; } = new double[n];
    }

    /// <summary>
    /// For fixed α, β*, φ: the one-step errors are e = e⁰ + ℓ₀·u + b₀·w, where e⁰ are the errors from
    /// zero initial states and u, w the errors of the recursions on a zero series from unit initial
    /// states (the recursions are linear). The (ℓ₀, b₀) minimising Σe² solve the normal equations.
    /// </summary>
    private static (double Sse, SmoothingParameters Parameters) Profile(double[] y, TrendKind trend, double[] theta, Scratch s)
    {
        var alpha = theta[0];
        var betaStar = theta.Length > 1 ? theta[1] : 0;
        var phi = trend == TrendKind.Damped ? theta[2] : 1;
        Errors(y, alpha, betaStar, phi, 0, 0, s.Base, zeroSeries: false);
        Errors(y, alpha, betaStar, phi, 1, 0, s.Level, zeroSeries: true);
        double l0, b0 = 0;
        if (trend == TrendKind.None)
        {
            double uu = 0, ue = 0;
            for (var t = 0; t < y.Length; t++)
            {
                uu += s.Level[t] * s.Level[t];
                ue += s.Level[t] * s.Base[t];
            }

            l0 = uu > 0 ? -ue / uu : y[0];
        }
        else
        {
            Errors(y, alpha, betaStar, phi, 0, 1, s.Slope, zeroSeries: true);
            double uu = 0, uw = 0, ww = 0, ue = 0, we = 0;
            for (var t = 0; t < y.Length; t++)
            {
                uu += s.Level[t] * s.Level[t];
                uw += s.Level[t] * s.Slope[t];
                ww += s.Slope[t] * s.Slope[t];
                ue += s.Level[t] * s.Base[t];
                we += s.Slope[t] * s.Base[t];
            }

            var det = (uu * ww) - (uw * uw);
            if (Math.Abs(det) > 1e-12 * Math.Max(1, uu * ww))
            {
                l0 = ((-ue * ww) + (we * uw)) / det;
                b0 = ((-we * uu) + (ue * uw)) / det;
            }
            else
            {
                // Implementation note: (ℓ₀, b₀) are not separately identified here (e.g. α = β* = 1); take b₀ = 0.
                l0 = uu > 0 ? -ue / uu : y[0];
            }
        }

        var parameters = new SmoothingParameters(alpha, betaStar, phi, l0, b0);
        double sse = 0;
        for (var t = 0; t < y.Length; t++)
        {
            var e = s.Base[t] + (l0 * s.Level[t]) + (b0 * s.Slope[t]);
            sse += e * e;
        }

        return (sse, parameters);
    }

    private static void Errors(double[] y, double alpha, double betaStar, double phi, double level, double slope, double[] errors, bool zeroSeries)
    {
        for (var t = 0; t < y.Length; t++)
        {
            var f = level + (phi * slope);
            var previousLevel = level;
            var value = zeroSeries ? 0 : y[t];
            errors[t] = value - f;
            level = (alpha * value) + ((1 - alpha) * f);
            slope = (betaStar * (level - previousLevel)) + ((1 - betaStar) * phi * slope);
        }
    }
}
