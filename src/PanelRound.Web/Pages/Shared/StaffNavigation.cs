using System.Security.Claims;
using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Mvc.Infrastructure;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.AspNetCore.Mvc.RazorPages.Infrastructure;

namespace PanelRound.Web.Pages.Shared;

/// <summary>
/// The staff navigation: the pages a signed-in person may open, decided by the same authorization the pages
/// themselves ask for (the folder conventions and the page models' <c>[Authorize(Policy = ...)]</c>, read from each
/// page's endpoint and evaluated with <see cref="IAuthorizationService"/>), so the menu never offers a page that refuses.
/// </summary>
public static class StaffNavigation
{
    /// <summary>A menu entry: the page (as Razor Pages names it), the URL it opens and its text.</summary>
    public sealed record Link(string Page, string Href, string Text);

    /// <summary>Every entry the menu can show, in order.</summary>
    public static readonly IReadOnlyList<Link> All =
    [
        new("/Staff/Panels/Index", "/Staff/Panels", "Panels"),
        new("/Staff/Indicators/Index", "/Staff/Indicators", "Indicators"),
        new("/Staff/Experts/Index", "/Staff/Experts", "Experts"),
        new("/Staff/Outcomes/Index", "/Staff/Outcomes", "Outcomes"),
        new("/Staff/Scorecard/Index", "/Staff/Scorecard", "Scorecard"),
        new("/Staff/Imports/Index", "/Staff/Imports", "Imports"),
        new("/ApiReference", "/api-reference", "API"),
        new("/Admin/Index", "/Admin", "Administration"),
    ];

    /// <summary>The entries the user may open.</summary>
    public static async Task<IReadOnlyList<Link>> AllowedAsync(IServiceProvider services, ClaimsPrincipal user)
    {
        var descriptors = services.GetRequiredService<IActionDescriptorCollectionProvider>().ActionDescriptors.Items.OfType<PageActionDescriptor>().ToList();
        var loader = services.GetRequiredService<PageLoader>();
        var policies = services.GetRequiredService<IAuthorizationPolicyProvider>();
        var authorization = services.GetRequiredService<IAuthorizationService>();
        var allowed = new List<Link>();
        foreach (var link in All)
        {
            // An Index page has two descriptors (its folder and /Index); both carry the same authorization.
            var descriptor = descriptors.FirstOrDefault(d => string.Equals(d.ViewEnginePath, link.Page, StringComparison.Ordinal));
            if (descriptor is null)
            {
                continue;
            }
            var compiled = descriptor as CompiledPageActionDescriptor ?? await loader.LoadAsync(descriptor, EndpointMetadataCollection.Empty);
            var metadata = compiled.Endpoint?.Metadata ?? new EndpointMetadataCollection(compiled.EndpointMetadata);
            if (metadata.GetMetadata<IAllowAnonymous>() is not null)
            {
                allowed.Add(link);
                continue;
            }
            var policy = await AuthorizationPolicy.CombineAsync(policies, metadata.GetOrderedMetadata<IAuthorizeData>());
            if (policy is null || (await authorization.AuthorizeAsync(user, policy)).Succeeded)
            {
                allowed.Add(link);
            }
        }
        return allowed;
    }
}
