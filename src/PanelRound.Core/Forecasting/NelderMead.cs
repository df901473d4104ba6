namespace PanelRound.Core.Forecasting;

/// <summary>
/// The Nelder–Mead simplex search (J. A. Nelder and R. Mead, The Computer Journal 7(4), 1965) with the
/// standard coefficients (reflection 1, expansion 2, contraction 0.5, shrink 0.5), every trial point
/// projected onto a box.
/// </summary>
internal static class NelderMead
{
    /// <summary>Two searches, the second restarted from the first's best point (the simplex can collapse early; a restart is the usual remedy).</summary>
    public static double[] Minimise(Func<double[], double> f, double[] start, double[] lower, double[] upper) =>
        Search(f, Search(f, start, lower, upper), lower, upper);

    private static double[] Search(Func<double[], double> f, double[] start, double[] lower, double[] upper, int maxEvaluations = 1000, double tolerance = 1e-10)
    {
        var n = start.Length;
        var simplex = new double[n + 1][];
        var values = new double[n + 1];
        simplex[0] = Project((double[])start.Clone(), lower, upper);
        for (var i = 0; i < n; i++)
        {
            var p = (double[])simplex[0].Clone();
            var step = 0.1 * (upper[i] - lower[i]);
            p[i] = p[i] + step <= upper[i] ? p[i] + step : p[i] - step;
            simplex[i + 1] = Project(p, lower, upper);
        }

        var evaluations = 0;
        for (var i = 0; i <= n; i++)
        {
            values[i] = f(simplex[i]);
            evaluations++;
        }

        while (evaluations < maxEvaluations)
        {
            Array.Sort(values, simplex);
            var spread = Math.Abs(values[n] - values[0]);
            var diameter = Diameter(simplex);
            if ((spread <= tolerance * (Math.Abs(values[0]) + tolerance) && diameter < 1e-5) || diameter < 1e-9)
            {
                break;
            }

            var centroid = new double[n];
            for (var i = 0; i < n; i++)
            {
                for (var j = 0; j < n; j++)
                {
                    centroid[j] += simplex[i][j] / n;
                }
            }

            var reflected = Point(centroid, simplex[n], -1, lower, upper);
            var fr = f(reflected);
            evaluations++;
            if (fr < values[0])
            {
                var expanded = Point(centroid, simplex[n], -2, lower, upper);
                var fe = f(expanded);
                evaluations++;
                (simplex[n], values[n]) = fe < fr ? (expanded, fe) : (reflected, fr);
            }
            else if (fr < values[n - 1])
            {
                (simplex[n], values[n]) = (reflected, fr);
            }
            else
            {
                var contracted = fr < values[n]
                    ? Point(centroid, reflected, 0.5, lower, upper)
                    : Point(centroid, simplex[n], 0.5, lower, upper);
                var fc = f(contracted);
                evaluations++;
                if (fc < Math.Min(fr, values[n]))
                {
                    (simplex[n], values[n]) = (contracted, fc);
                }
                else
                {
                    for (var i = 1; i <= n; i++)
                    {
                        simplex[i] = Point(simplex[0], simplex[i], 0.5, lower, upper);
                        values[i] = f(simplex[i]);
                        evaluations++;
                    }
                }
            }
        }

        var best = 0;
        for (var i = 1; i <= n; i++)
        {
            if (values[i] < values[best])
            {
                best = i;
            }
        }

        return simplex[best];
    }

    /// <summary>centre + t·(p − centre), projected onto the box.</summary>
    private static double[] Point(double[] centre, double[] p, double t, double[] lower, double[] upper)
    {
        var result = new double[centre.Length];
        for (var j = 0; j < centre.Length; j++)
        {
            result[j] = centre[j] + (t * (p[j] - centre[j]));
        }

        return Project(result, lower, upper);
    }

    private static double[] Project(double[] p, double[] lower, double[] upper)
    {
        for (var j = 0; j < p.Length; j++)
        {
            p[j] = Math.Clamp(p[j], lower[j], upper[j]);
        }

        return p;
    }

    private static double Diameter(double[][] simplex)
    {
        var d = 0.0;
        for (var i = 1; i < simplex.Length; i++)
        {
            for (var j = 0; j < simplex[0].Length; j++)
            {
                d = Math.Max(d, Math.Abs(simplex[i][j] - simplex[0][j]));
            }
        }

        return d;
    }
}
