using System.Reflection;
using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Authorization.Policy;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.ApplicationModels;
using Microsoft.AspNetCore.Mvc.Filters;
using Microsoft.AspNetCore.Mvc.RazorPages;

namespace PanelRound.Web.Infrastructure;

/// <summary>
/// The authorization policy a page's writing handlers (every handler but GET and HEAD) require:
/// the policy of the API route that makes the same change. On the page model it covers all the
/// page's writing handlers; on a handler method it replaces the page model's.
/// </summary>
[AttributeUsage(AttributeTargets.Class | AttributeTargets.Method, AllowMultiple = false, Inherited = true)]
public sealed class WritePolicyAttribute(string policy) : Attribute
{
    public string Policy { get; } = policy;
}

/// <summary>
/// Enforces <see cref="WritePolicyAttribute"/> on the pages of the folders it is added to. A
/// folder's read policy lets every role it admits reach every handler of its pages, and Razor
/// Pages ignore authorization attributes on handler methods, so each writing handler is checked
/// here before it runs. A writing handler without a policy is refused (fail closed).
/// </summary>
public sealed class WritePolicyFilter : IAsyncPageFilter
{
    /// <summary>The policy a handler requires, or null when neither the method nor its page model names one.</summary>
    public static string? PolicyOf(MethodInfo handler, Type pageModel) =>
        (handler.GetCustomAttribute<WritePolicyAttribute>() ?? pageModel.GetCustomAttribute<WritePolicyAttribute>())?.Policy;

    public static bool Writes(string httpMethod) => !HttpMethods.IsGet(httpMethod) && !HttpMethods.IsHead(httpMethod);

    public Task OnPageHandlerSelectionAsync(PageHandlerSelectedContext context) => Task.CompletedTask;

    public async Task OnPageHandlerExecutionAsync(PageHandlerExecutingContext context, PageHandlerExecutionDelegate next)
    {
        if (context.HandlerMethod is { } handler && Writes(handler.HttpMethod)
            && await RefusalAsync(context.HttpContext, context.ActionDescriptor, handler.MethodInfo) is { } refusal)
        {
            context.Result = refusal;
            return;
        }
        await next();
    }

    /// <summary>The challenge or forbid result for a caller the handler's policy refuses; null when it admits the caller.</summary>
    private static async Task<IActionResult?> RefusalAsync(HttpContext http, CompiledPageActionDescriptor page, MethodInfo handler)
    {
        var services = http.RequestServices;
        var name = PolicyOf(handler, page.HandlerTypeInfo.AsType());
        var policy = name is null ? null : await services.GetRequiredService<IAuthorizationPolicyProvider>().GetPolicyAsync(name);
        if (policy is null)
        {
            services.GetRequiredService<ILogger<WritePolicyFilter>>().LogError(
                "Refused {Page} {Handler}: the handler writes and names no known write policy ({Policy}).", page.ViewEnginePath, handler.Name, name ?? "none");
            return http.User.Identity?.IsAuthenticated == true ? new ForbidResult() : new ChallengeResult();
        }
        // As the authorization middleware does: authenticate with the policy's schemes, then evaluate it.
        var evaluator = services.GetRequiredService<IPolicyEvaluator>();
        var authentication = await evaluator.AuthenticateAsync(policy, http);
        var authorization = await evaluator.AuthorizeAsync(policy, authentication, http, resource: null);
        if (authorization.Succeeded)
        {
            return null;
        }
        var schemes = policy.AuthenticationSchemes.ToList();
        return authorization.Challenged ? new ChallengeResult(schemes) : new ForbidResult(schemes);
    }
}

public static class WritePolicyConventions
{
    /// <summary>Checks the write policy of every writing handler of the pages under each folder.</summary>
    public static PageConventionCollection RequireWritePolicies(this PageConventionCollection conventions, params string[] folders)
    {
        var filter = new WritePolicyFilter();
        foreach (var folder in folders)
        {
            conventions.AddFolderApplicationModelConvention(folder, model => model.Filters.Add(filter));
        }
        return conventions;
    }
}
