using Microsoft.AspNetCore.Mvc.RazorPages;

namespace PanelRound.Web.Pages;

/// <summary>The API reference: every JSON endpoint with its method, route, name and summary; the full schema is /openapi/v1.json.</summary>
public class ApiReferenceModel(EndpointDataSource endpoints) : PageModel
{
    public sealed record Operation(string Tag, string Method, string Route, string Name, string Summary);

    public IReadOnlyList<Operation> Operations { get; private set; } = [];

    public void OnGet() =>
        Operations = endpoints.Endpoints.OfType<RouteEndpoint>()
            .Where(e => e.RoutePattern.RawText?.StartsWith("/api", StringComparison.Ordinal) == true)
            .Select(e => new Operation(
                e.Metadata.GetMetadata<Microsoft.AspNetCore.Http.Metadata.ITagsMetadata>()is { Tags.Count: > 0 } t ? t.Tags[0] : "",
                string.Join(", ", e.Metadata.GetMetadata<HttpMethodMetadata>()?.HttpMethods ?? []),
                e.RoutePattern.RawText!,
                e.Metadata.GetMetadata<IEndpointNameMetadata>()?.EndpointName ?? "",
                e.Metadata.GetMetadata<Microsoft.AspNetCore.Http.Metadata.IEndpointSummaryMetadata>()?.Summary ?? ""))
            .OrderBy(o => o.Tag).ThenBy(o => o.Route).ThenBy(o => o.Method).ToList();
}
