"""A matrix point as a study of its own: the base study with the point's full-scale Mach number,
angle of attack, coefficients and stagnation pressure, and the held set-point variables fixed at
the base set point's values.  Running that study alone gives the point's statistics (the tests
compare); the matrix only changes which draws its trials take (:mod:`simunc.matrix.draws`).
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any, cast

from simunc.study.schema import MatrixPoint, Study

#: The facility field that fixes each holdable set-point variable of a gas or liquid facility.
_FIXED = {"stagnation_pressure": "stagnation_pressure",
          "stagnation_temperature": "stagnation_temperature", "mach": "mach", "speed": "speed",
          "temperature": "temperature"}


def point_study(study: Study, point: MatrixPoint, held: dict[str, float]) -> Study:
    """The study of one matrix point; ``held``: the base set point's value of each variable
    the matrix holds (``[matrix] hold``)."""
    v = point.values
    fixed = dict(held)
    if "stagnation_pressure" in v:
        fixed["stagnation_pressure"] = float(v["stagnation_pressure"])
    fs = study.full_scale
    if "mach" in v:
        fs = replace(fs, value=float(v["mach"]), mach=float(v["mach"]))
    m = study.measurement
    if m is not None:
        changes: dict[str, Any] = {}
        if "angle_of_attack" in v:
            changes["angle_of_attack"] = float(v["angle_of_attack"])
        if point.coefficients:
            changes["coefficients"] = dict(point.coefficients)
        m = replace(m, **changes) if changes else m
    fac = study.facility
    model_length = study.model_reference_length
    for key, value in fixed.items():
        if key == "model_length":
            model_length = value
        else:
            fac = replace(fac, **cast("dict[str, Any]", {_FIXED[key]: value}))
    unknowns = tuple(k for k in study.unknowns if k not in fixed)
    written = set(fixed) | ({"model_scale", "model_reference_length"} if "model_length" in fixed
                            else set())
    solve_for = tuple(k for k in study.solve_for if k not in written)
    return replace(study, full_scale=fs, facility=fac, measurement=m, unknowns=unknowns,
                   solve_for=solve_for, model_reference_length=model_length,
                   model_scale=None if "model_length" in fixed else study.model_scale,
                   matrix=None, sweeps=(), plan_requirements=())
