using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using PanelRound.Web.Features.Calibration;

namespace PanelRound.Web.Pages.Staff.Panels;

/// <summary>The out-of-sample check of a panel's calibration weights: weights fitted on part of the calibration questions, both combinations scored on the rest.</summary>
public class CrossValidationModel(CalibrationResults calibration) : PageModel
{
    [BindProperty(SupportsGet = true)]
    public int Id { get; set; }

    [BindProperty(SupportsGet = true)]
    public int? TrainingSize { get; set; }

    public CrossValidationView? View { get; private set; }

    public async Task<IActionResult> OnGetAsync()
    {
        if (!ModelState.IsValid)
        {
            ModelState.Remove(nameof(TrainingSize));
            ModelState.AddModelError(nameof(TrainingSize), "The training size is a whole number.");
            TrainingSize = null;
        }
        var result = await calibration.CrossValidateAsync(Id, TrainingSize);
        if (result.Kind == PanelRound.Web.Infrastructure.ResultKind.NotFound)
        {
            return NotFound();
        }
        if (!result.IsOk)
        {
            foreach (var (field, messages) in result.Errors)
            {
                foreach (var m in messages)
                {
                    ModelState.AddModelError(nameof(TrainingSize), m);
                }
            }
            result = await calibration.CrossValidateAsync(Id, null);
        }
        View = result.Value;
        return Page();
    }
}
