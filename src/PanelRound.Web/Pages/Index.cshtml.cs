using Microsoft.AspNetCore.Mvc.RazorPages;

namespace PanelRound.Web.Pages;

public class IndexModel : PageModel
{
    public void OnGet()
    {
    }
}
