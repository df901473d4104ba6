#!/usr/bin/python3
"""Writes the exponential-smoothing reference data for the forecasting tests.

Run with Debian's interpreter and package (python3-statsmodels), no network needed:
    /usr/bin/python3 tests/PanelRound.Core.Tests/TestData/Forecasting/generate.py
The outputs (series CSVs and reference JSON) are committed; the tests read them and need no Python.
"""
import json
import os
import warnings

import numpy as np
import pandas as pd
import scipy
import statsmodels
from statsmodels.datasets import macrodata, nile
from statsmodels.tsa.exponential_smoothing.ets import ETSModel
from statsmodels.tsa.holtwinters import ExponentialSmoothing

warnings.simplefilter("ignore")
HERE = os.path.dirname(os.path.abspath(__file__))
HORIZON = 8


def series():
    nile_df = nile.load_pandas().data
    yield "nile", "statsmodels.datasets.nile: annual flow of the Nile at Aswan, 1871-1970 (100 values)", \
        [str(int(y)) for y in nile_df["year"]], nile_df["volume"].astype(float).tolist()
    macro = macrodata.load_pandas().data.iloc[:60]
    yield "realgdp", "statsmodels.datasets.macrodata: column realgdp, 1959Q1-1973Q4 (first 60 quarters)", \
        [f"{int(y)}Q{int(q)}" for y, q in zip(macro["year"], macro["quarter"])], macro["realgdp"].astype(float).tolist()


MODELS = {
    "ses": dict(trend=None, damped_trend=False),
    "holt": dict(trend="add", damped_trend=False),
    "damped": dict(trend="add", damped_trend=True),
}
ETS_PARAMS = {"ses": ["alpha", "l0"], "holt": ["alpha", "beta", "l0", "b0"], "damped": ["alpha", "beta", "phi", "l0", "b0"]}


def main():
    out = {
        "generator": "tests/PanelRound.Core.Tests/TestData/Forecasting/generate.py",
        "statsmodels": statsmodels.__version__,
        "scipy": scipy.__version__,
        "numpy": np.__version__,
        "pandas": pd.__version__,
        "horizon": HORIZON,
        "series": [],
    }
    for key, description, periods, values in series():
        with open(os.path.join(HERE, f"{key}.csv"), "w", encoding="utf-8", newline="\n") as f:
            f.write("period,value\n")
            for p, v in zip(periods, values):
                f.write(f"{p},{v!r}\n")
        y = pd.Series(values, dtype=float)
        entry = {"key": key, "description": description, "n": len(values), "models": {}}
        for name, settings in MODELS.items():
            # Holt-Winters class: SSE-minimising fit (its default), initial states estimated with the smoothing parameters.
            fit = ExponentialSmoothing(y, initialization_method="estimated", **settings).fit()
            p = fit.params
            alpha = float(p["smoothing_level"])
            beta_star = float(p["smoothing_trend"]) if settings["trend"] else None
            phi = float(p["damping_trend"]) if settings["damped_trend"] else None
            l0 = float(p["initial_level"])
            b0 = float(p["initial_trend"]) if settings["trend"] else None
            # The state-space class, given exactly these parameters (beta = alpha * beta_star in its error-correction
            # form), gives the forecast variance of the additive-error model per horizon (FPP3 section 8.7).
            ets = ETSModel(y, error="add", trend=settings["trend"], damped_trend=settings["damped_trend"],
                           initialization_method="known", initial_level=l0,
                           initial_trend=b0 if b0 is not None else None)
            vector = {"alpha": alpha, "beta": None if beta_star is None else alpha * beta_star, "phi": phi, "l0": l0, "b0": b0}
            smoothed = ets.smooth([vector[k] for k in ETS_PARAMS[name] if k not in ("l0", "b0")] + [l0] + ([b0] if b0 is not None else []))
            frame = smoothed.get_prediction(start=len(y), end=len(y) + HORIZON - 1).summary_frame(alpha=0.2)
            scale = float(smoothed.scale)
            relative_variance = [float(v) / scale for v in np.asarray(smoothed.get_prediction(start=len(y), end=len(y) + HORIZON - 1).forecast_variance)]
            entry["models"][name] = {
                "settings": {"class": "statsmodels.tsa.holtwinters.ExponentialSmoothing", "initialization_method": "estimated",
                             "fit": "default (minimise SSE, L-BFGS-B after a brute-force start)", **settings},
                "alpha": alpha, "beta_star": beta_star, "phi": phi, "l0": l0, "b0": b0,
                "sse": float(fit.sse),
                "fitted": [float(v) for v in np.asarray(fit.fittedvalues)],
                "forecast": [float(v) for v in np.asarray(fit.forecast(HORIZON))],
                "ets_forecast": [float(v) for v in frame["mean"]],
                "ets_scale_mean_squared_residual": scale,
                "ets_relative_forecast_variance": relative_variance,
                "ets_p10": [float(v) for v in frame["pi_lower"]],
                "ets_p90": [float(v) for v in frame["pi_upper"]],
            }
        out["series"].append(entry)
    with open(os.path.join(HERE, "exponential-smoothing-reference.json"), "w", encoding="utf-8", newline="\n") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
