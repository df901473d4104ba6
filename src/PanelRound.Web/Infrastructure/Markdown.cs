using Ganss.Xss;
using Markdig;

namespace PanelRound.Web.Infrastructure;

/// <summary>Renders a panel brief (Markdown) to HTML through a sanitiser, so a brief can never carry script.</summary>
public static class Markdown
{
    private static readonly MarkdownPipeline Pipeline = new MarkdownPipelineBuilder().UseAdvancedExtensions().DisableHtml().Build();

    private static readonly HtmlSanitizer Sanitizer = NewSanitizer();

    /// <summary>The default sanitiser without style attributes (e.g. table alignment): the Content-Security-Policy refuses inline styles.</summary>
    private static HtmlSanitizer NewSanitizer()
    {
        var sanitizer = new HtmlSanitizer();
        sanitizer.AllowedAttributes.Remove("style");
        return sanitizer;
    }

    public static string ToSafeHtml(string? markdown) =>
        string.IsNullOrWhiteSpace(markdown) ? "" : Sanitizer.Sanitize(Markdig.Markdown.ToHtml(markdown, Pipeline));
}
