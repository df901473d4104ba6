using Microsoft.AspNetCore.Razor.TagHelpers;

namespace PanelRound.Web.Infrastructure;

/// <summary>
/// A table frame that scrolls sideways on a narrow screen (a div whose class list begins with <c>table-responsive</c>) can be
/// reached and scrolled from the keyboard: it joins the tab order and is named as a scrollable region
/// (WCAG 2.1.1; axe-core's rule scrollable-region-focusable). A frame that names itself is left as written.
/// </summary>
[HtmlTargetElement("div", Attributes = "[class^=table-responsive]")]
public sealed class ScrollFrameTagHelper : TagHelper
{
    public override void Process(TagHelperContext context, TagHelperOutput output)
    {
        var classes = output.Attributes["class"]?.Value?.ToString() ?? "";
        if (!classes.Split(' ', StringSplitOptions.RemoveEmptyEntries).Contains("table-responsive", StringComparer.Ordinal))
        {
            return;
        }
        if (!output.Attributes.ContainsName("tabindex"))
        {
            output.Attributes.SetAttribute("tabindex", "0");
        }
        if (!output.Attributes.ContainsName("role"))
        {
            output.Attributes.SetAttribute("role", "region");
        }
        if (!output.Attributes.ContainsName("aria-label") && !output.Attributes.ContainsName("aria-labelledby"))
        {
            output.Attributes.SetAttribute("aria-label", "Table (scrolls sideways)");
        }
    }
}
