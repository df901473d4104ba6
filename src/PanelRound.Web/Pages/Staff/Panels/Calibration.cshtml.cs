using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using PanelRound.Web.Features.Calibration;

namespace PanelRound.Web.Pages.Staff.Panels;

/// <summary>A panel's calibration questions for staff: true values, each expert's scores and weight by panel code, the three consensus side by side.</summary>
public class CalibrationModel(CalibrationResults calibration) : PageModel
{
    [BindProperty(SupportsGet = true)]
    public int Id { get; set; }

    public PanelCalibrationView View { get; private set; } = null!;

    public CalibrationComparison? Comparison { get; private set; }

    public async Task<IActionResult> OnGetAsync()
    {
        var view = await calibration.ViewAsync(Id);
        if (view is null)
        {
            return NotFound();
        }
        View = view;
        Comparison = await calibration.CompareAsync(Id);
        return Page();
    }
}
