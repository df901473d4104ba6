using PdfSharp.Fonts;

namespace PanelRound.Web.Reports;

/// <summary>
/// The fonts of every PDF the product writes: DejaVu Sans regular and bold, shipped inside the
/// assembly (Bitstream Vera licence, in Reports/Fonts), so a report renders the same on a fresh
/// Linux machine, in a container or on a developer's laptop, whatever fonts are installed.
/// </summary>
public sealed class ReportFonts : IFontResolver
{
    /// <summary>The family name reports ask for.</summary>
    public const string Family = "DejaVu Sans";

    private static readonly Lock Gate = new();
    private static readonly Dictionary<string, byte[]> Faces = new(StringComparer.Ordinal);

    /// <summary>Installs the resolver once per process (PDFsharp allows one global resolver).</summary>
    public static void EnsureInstalled()
    {
        lock (Gate)
        {
            if (GlobalFontSettings.FontResolver is not ReportFonts)
            {
                GlobalFontSettings.FontResolver = new ReportFonts();
            }
        }
    }

    public FontResolverInfo? ResolveTypeface(string familyName, bool bold, bool italic) =>
        // Every family maps to DejaVu Sans; italic is simulated by PDFsharp when asked for.
        new(bold ? "DejaVuSans-Bold" : "DejaVuSans", false, italic);

    public byte[]? GetFont(string faceName)
    {
        lock (Gate)
        {
            if (Faces.TryGetValue(faceName, out var bytes))
            {
                return bytes;
            }
            using var stream = typeof(ReportFonts).Assembly.GetManifestResourceStream($"PanelRound.Fonts.{faceName}.ttf")
                ?? throw new InvalidOperationException($"The font {faceName} is not embedded in the assembly.");
            using var copy = new MemoryStream();
            stream.CopyTo(copy);
            return Faces[faceName] = copy.ToArray();
        }
    }
}
