using System.Reflection;
using System.Security.Claims;
using Microsoft.AspNetCore.Http;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.Filters;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.AspNetCore.Mvc.RazorPages.Infrastructure;
using Microsoft.AspNetCore.Routing;
using Microsoft.Extensions.DependencyInjection;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>How the page filter finds a handler's write policy, and that a writing handler without one is refused.</summary>
public sealed class WritePolicyFilterTests
{
    public class UnmarkedModel : PageModel
    {
        public IActionResult OnGet() => Page();

        public IActionResult OnPost() => Page();
    }

    [WritePolicy(AuthSetup.ReviewerPolicy)]
    public class MarkedModel : PageModel
    {
        public IActionResult OnPost() => Page();

        [WritePolicy(AuthSetup.AdministratorPolicy)]
        public IActionResult OnPostPurge() => Page();
    }

    public class UnknownPolicyModel : PageModel
    {
        [WritePolicy("NoSuchPolicy")]
        public IActionResult OnPost() => Page();
    }

    [Fact]
    public void PolicyOf_MethodMarked_MethodWinsOverPageModel()
    {
        Assert.Equal(AuthSetup.AdministratorPolicy, WritePolicyFilter.PolicyOf(Handler<MarkedModel>(nameof(MarkedModel.OnPostPurge)), typeof(MarkedModel)));
        Assert.Equal(AuthSetup.ReviewerPolicy, WritePolicyFilter.PolicyOf(Handler<MarkedModel>(nameof(MarkedModel.OnPost)), typeof(MarkedModel)));
        Assert.Null(WritePolicyFilter.PolicyOf(Handler<UnmarkedModel>(nameof(UnmarkedModel.OnPost)), typeof(UnmarkedModel)));
    }

    [Theory]
    [InlineData(typeof(UnmarkedModel), true, typeof(ForbidResult))]
    [InlineData(typeof(UnmarkedModel), false, typeof(ChallengeResult))]
    [InlineData(typeof(UnknownPolicyModel), true, typeof(ForbidResult))]
    public async Task Post_NoKnownPolicy_RefusedWithoutRunningTheHandler(Type model, bool signedIn, Type refusal)
    {
        var (result, ran) = await RunAsync(model, "OnPost", "Post", signedIn);
        Assert.False(ran);
        Assert.IsType(refusal, result);
    }

    [Fact]
    public async Task Get_NoPolicy_RunsTheHandler()
    {
        var (result, ran) = await RunAsync(typeof(UnmarkedModel), nameof(UnmarkedModel.OnGet), "Get", signedIn: false);
        Assert.True(ran);
        Assert.Null(result);
    }

    private static MethodInfo Handler<T>(string name) => typeof(T).GetMethod(name)!;

    /// <summary>Runs the filter around one handler for an Administrator (or an anonymous caller); reports the result it set and whether the handler ran.</summary>
    private static async Task<(IActionResult? Result, bool Ran)> RunAsync(Type model, string method, string verb, bool signedIn)
    {
        var services = new ServiceCollection().AddLogging().AddAuthorization().BuildServiceProvider();
        var user = signedIn
            ? new ClaimsPrincipal(new ClaimsIdentity([new Claim(ClaimTypes.Name, "admin"), new Claim(ClaimTypes.Role, Roles.Administrator)], "Test"))
            : new ClaimsPrincipal(new ClaimsIdentity());
        var http = new DefaultHttpContext { RequestServices = services, User = user };
        http.Request.Method = verb.ToUpperInvariant();
        var descriptor = new CompiledPageActionDescriptor { HandlerTypeInfo = model.GetTypeInfo(), ViewEnginePath = "/Staff/Test" };
        var page = new PageContext(new ActionContext(http, new RouteData(), descriptor)) { ActionDescriptor = descriptor };
        var handler = new HandlerMethodDescriptor { HttpMethod = verb, MethodInfo = model.GetMethod(method)!, Parameters = [] };
        var instance = Activator.CreateInstance(model)!;
        var executing = new PageHandlerExecutingContext(page, [], handler, new Dictionary<string, object?>(), instance);
        var ran = false;
        await new WritePolicyFilter().OnPageHandlerExecutionAsync(executing, () =>
        {
            ran = true;
            return Task.FromResult(new PageHandlerExecutedContext(page, [], handler, instance));
        });
        return (executing.Result, ran);
    }
}
