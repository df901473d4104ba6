using System.ComponentModel.DataAnnotations;
using Microsoft.AspNetCore.Identity;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Account;

public class LoginModel(SignInManager<StaffUser> signIn) : PageModel
{
    public sealed class InputModel
    {
        [Required, EmailAddress]
        public string Email { get; set; } = "";

        [Required, DataType(DataType.Password)]
        public string Password { get; set; } = "";
    }

    [BindProperty]
    public InputModel Input { get; set; } = new();

    [BindProperty(SupportsGet = true)]
    public string? ReturnUrl { get; set; }

    public void OnGet()
    {
    }

    public async Task<IActionResult> OnPostAsync([FromServices] SignInThrottle throttle)
    {
        if (!ModelState.IsValid)
        {
            return Page();
        }
        if (await signIn.SignInStaffAsync(throttle, Input.Email, Input.Password, HttpContext.RequestAborted))
        {
            return LocalRedirect(Url.IsLocalUrl(ReturnUrl) ? ReturnUrl : "/Staff/Panels");
        }
        ModelState.AddModelError(string.Empty, StaffSignIn.FailedMessage);
        return Page();
    }
}
