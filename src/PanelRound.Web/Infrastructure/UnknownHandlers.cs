using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.Filters;

namespace PanelRound.Web.Infrastructure;

/// <summary>
/// A request naming a handler the page does not have (<c>?handler=nonsense</c>) answers 404.
/// Implementation note: Razor Pages otherwise renders the page without running any handler, and
/// a page whose model is filled by its handler would fail with a 500.
/// </summary>
public sealed class UnknownHandlerFilter : IAsyncPageFilter
{
    public Task OnPageHandlerSelectionAsync(PageHandlerSelectedContext context) => Task.CompletedTask;

    public Task OnPageHandlerExecutionAsync(PageHandlerExecutingContext context, PageHandlerExecutionDelegate next)
    {
        if (context.HandlerMethod is null && context.ActionDescriptor.HandlerMethods.Count > 0)
        {
            context.Result = new NotFoundResult();
            return Task.CompletedTask;
        }
        return next();
    }
}
