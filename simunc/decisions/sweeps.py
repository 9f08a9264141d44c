"""Tolerance sweeps on the common-random-number design sample."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd

from simunc.decisions.design import Design, Figures
from simunc.study.schema import Spacing


@dataclass(frozen=True, kw_only=True)
class SweepResult:
    """A tolerance sweep: ``table`` has one row per point (scales, then the figures)."""

    key: str
    inputs: tuple[str, ...]
    scales: tuple[np.ndarray, ...]    # one array of scales per swept input
    spacing: Spacing
    table: pd.DataFrame


def sweep_scales(low: float, high: float, points: int, spacing: Spacing) -> np.ndarray:
    """Scale values of a sweep (``log`` spacing needs ``low > 0``; 1 is added when inside).

    >>> sweep_scales(0.5, 2.0, 4, "linear").tolist()
    [0.5, 1.0, 1.5, 2.0]
    """
    if spacing == "log":
        s = np.geomspace(low, high, points)
    else:
        s = np.linspace(low, high, points)
    if low <= 1.0 <= high and not np.any(np.isclose(s, 1.0)):
        s = np.sort(np.append(s, 1.0))
    return s


def _row(fig: Figures, design: Design) -> dict:
    row = {}
    for band in design.study.bands:
        row[f"U_k2_{band.output}"] = fig.expanded_k2[band.output]
        row[f"U_p_{band.output}"] = fig.half_length[band.output]
    for g, v in fig.conformity.items():
        row[f"conformity_{g}"] = v
    for c in fig.requirements:
        row[f"met_{c.key}"] = c.met
    row["physical"] = fig.finite
    return row


def sweep(design: Design, key: str, inputs, low: float, high: float, points: int,
          spacing: Spacing = "linear",
          on_point: Callable[[int, int], None] | None = None) -> SweepResult:
    """Scale the tolerance of one input (a line) or two (a grid) on the design sample.

    Every other input stays as written.  Returns the expanded uncertainty
    (k = 2), the coverage half-length of every matched group, the conformity
    probabilities and whether each requirement holds, per point.  ``on_point(i, n)`` is
    called after point i of n (progress).
    """
    names = design.names
    idx = [names.index(n) for n in inputs]
    s = sweep_scales(low, high, points, spacing)
    grids = np.meshgrid(*([s] * len(idx)), indexing="ij")
    rows = []
    for i, point in enumerate(zip(*(g.ravel() for g in grids))):
        scale = design.ones()
        scale[idx] = point
        fig = design.figures(scale)
        rows.append({f"scale: {n}": v for n, v in zip(inputs, point)} | _row(fig, design))
        if on_point is not None:
            on_point(i + 1, grids[0].size)
    return SweepResult(key=key, inputs=tuple(inputs), scales=tuple(s for _ in idx),
                       spacing=spacing, table=pd.DataFrame(rows))
