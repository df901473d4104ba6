using Ganss.Xss;
using Markdig;

namespace PanelRound.Web.Infrastructure;

/// <summary>Renders a panel brief (Markdown) to HTML through a sanitiser, so a brief can never carry script.</summary>
public static class Markdown
{
    private static readonly MarkdownPipeline Pipeline = new MarkdownPipelineBuilder().UseAdvancedExtensions().DisableHtml().Build();

    private static readonly HtmlSanitizer Sanitizer = new();

    public static string ToSafeHtml(string? markdown) =>
        string.IsNullOrWhiteSpace(markdown) ? "" : Sanitizer.Sanitize(Markdig.Markdown.ToHtml(markdown, Pipeline));
}
