namespace PanelRound.Web.Features.Scorecard;

/// <summary>Figures as pages and the API show them: a number that is not finite (NaN, infinity) is shown as missing, never serialised.</summary>
public static class Figures
{
    public static double? Finite(double? value) => value is { } v && double.IsFinite(v) ? v : null;
}
