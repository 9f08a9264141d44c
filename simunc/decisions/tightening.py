""""Control this more tightly": what halving each tolerance buys, on the design sample."""

from __future__ import annotations

import numpy as np
import pandas as pd

from simunc.decisions.design import Design


def tightening(design: Design, variance_removed: dict[str, pd.Series], inputs) -> pd.DataFrame:
    """Rank inputs by what halving their tolerance buys (common random numbers).

    Parameters
    ----------
    design : Design
    variance_removed : dict
        Per matched-group output, a Series (by input) of the variance fraction
        removed if the input were known exactly: the first-order Sobol index
        S1 = Var(E[y | x_i]) / Var(y) for independent inputs, its dependence-aware
        counterpart with correlations.
    inputs : list of UncertainInput
        For the ``controllable`` flag and the targets.

    Returns
    -------
    DataFrame
        Index ``input``; per matched group ``variance_removed_<output>``
        [unit of y squared], ``variance_removed_percent_<output>``,
        ``U_k2_halved_<output>`` and ``delta_U_k2_<output>`` (the change of
        U = 2 u when the input's tolerance is halved); ``conformity_halved``
        and ``delta_conformity`` (all groups); ``gain_bands``, the largest
        reduction of U over a group's tolerance half-width (or over the requirement limit on a
        measured coefficient, whose columns are added alike); ``controllable``
        and ``rank`` (controllable inputs first, then by ``gain_bands``).
    """
    base = design.figures(design.ones())
    rows = []
    for j, inp in enumerate(inputs):
        scale = design.ones()
        scale[j] = 0.5
        fig = design.figures(scale)
        row = {"input": inp.name, "perturbs": ", ".join(inp.targets),
               "controllable": bool(inp.spec.controllable)}
        gains = []
        for band in design.study.bands:
            k = band.output
            var = base.standard_uncertainty[k] ** 2
            frac = float(variance_removed.get(k, pd.Series(dtype=float)).get(inp.name, np.nan))
            frac = min(max(frac, 0.0), 1.0) if np.isfinite(frac) else np.nan  # estimates
            row[f"variance_removed_{k}"] = frac * var
            row[f"variance_removed_percent_{k}"] = 100.0 * frac
            row[f"U_k2_halved_{k}"] = fig.expanded_k2[k]
            row[f"delta_U_k2_{k}"] = fig.expanded_k2[k] - base.expanded_k2[k]
            gains.append((base.expanded_k2[k] - fig.expanded_k2[k]) / band.tolerance)
        for k in design.study.coefficient_outputs:  # measured coefficients with a limit on them
            limit = design.study.limit_of_output(k)
            if limit is None:
                continue
            frac = float(variance_removed.get(k, pd.Series(dtype=float)).get(inp.name, np.nan))
            row[f"variance_removed_percent_{k}"] = 100.0 * min(max(frac, 0.0), 1.0) \
                if np.isfinite(frac) else np.nan
            row[f"U_k2_halved_{k}"] = fig.expanded_k2[k]
            row[f"delta_U_k2_{k}"] = fig.expanded_k2[k] - base.expanded_k2[k]
            gains.append((base.expanded_k2[k] - fig.expanded_k2[k]) / limit)
        row["conformity_halved"] = fig.conformity["all"]
        row["delta_conformity"] = fig.conformity["all"] - base.conformity["all"]
        row["gain_bands"] = max(gains) if gains else 0.0
        rows.append(row)
    if not rows:
        return pd.DataFrame(columns=["input", "perturbs", "controllable", "gain_bands",
                                     "rank"]).set_index("input")
    table = pd.DataFrame(rows)
    table["_order"] = ~table["controllable"]
    table = table.sort_values(["_order", "gain_bands"], ascending=[True, False]).drop(columns="_order")
    table["rank"] = np.arange(1, len(table) + 1)
    return table.set_index("input")
