"""The force balance at the set point: utilisation, candidates and what a candidate changes.

* :func:`utilisation`: the expected steady loads as a fraction of each component's capacity;
  above 100 % the balance is overloaded, above ``1 / (1 + margin)`` it breaks the study's load
  margin, below :data:`LOW_UTILISATION` the %-of-full-scale errors dominate the coefficients
  (common practice, no source: balances are usually sized so that the test loads use a good
  part of each range).
* :func:`choices`: the balance as one grade choice of the allocation: the written balance and
  each ``[[measurement.balance_option]]`` whose capacities carry the expected loads with the
  margin (a balance that does not is no candidate), each with the tolerance scale it gives
  every balance input.

A candidate's accuracy, for the input on each of its components (by that input's first target):

* written as a datasheet ``accuracy``: its %-of-reading and absolute terms stay; its
  %-of-full-scale term becomes the option's %-of-full-scale (the written one when the option
  states none) of the written range scaled by the ratio of the capacities (a range written
  one- or two-sided stays so), or of the option's capacity when the input has no full-scale
  term;
* written in another form with a size in % of reading: unchanged (an error proportional to
  the load, not to the range);
* written in another form in units of the load: scaled by the ratio of the capacities (an
  error proportional to the full scale).

The written balance is its inputs as written: scale 1.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, replace

from typing import TYPE_CHECKING

import numpy as np

from simunc.similitude.inputs import UncertainInput, standard_uncertainty
from simunc.study.catalogue import TARGETS
from simunc.study.schema import InputSpec, Measurement
from simunc.units import DIMENSIONS, Parsed, from_si, written_unit
from simunc.units import load_text

if TYPE_CHECKING:
    import pandas as pd

#: Utilisation below which a note says the %-of-full-scale errors dominate (common practice,
#: no source).
LOW_UTILISATION = 0.20


def utilisation(m: Measurement, outputs: Mapping[str, float],
                capacity: Mapping[str, float] | None = None) -> pd.DataFrame:
    """Expected load, capacity and utilisation |load| / capacity per balance component
    (:func:`utilisation_rows` as a table).

    >>> from simunc.study.schema import Measurement
    >>> m = Measurement(angle_of_attack=0.0, coefficients={}, area_per_length2=1.0,
    ...                 chord_per_length=1.0, span_per_length=1.0,
    ...                 capacity={"normal_force": 1000.0}, load_margin=0.25)
    >>> utilisation(m, {"normal_force": 850.0})[["utilisation", "status"]].values.tolist()
    [[0.85, 'above the load margin (25 %)']]
    """
    import pandas as pd  # here: `simunc check` reads the rows without loading pandas

    return pd.DataFrame(utilisation_rows(m, outputs, capacity),
                        columns=["component", "load", "capacity", "utilisation", "status"])


def utilisation_rows(m: Measurement, outputs: Mapping[str, float],
                     capacity: Mapping[str, float] | None = None) -> list[dict]:
    """One dict per balance component: ``component``, ``load``, ``capacity``, ``utilisation``
    and ``status`` (module docstring)."""
    capacity = m.capacity if capacity is None else capacity
    rows = []
    for c, cap in capacity.items():
        load = float(outputs[c])
        used = abs(load) / cap
        if load == 0.0:
            status = "no load expected"
        elif used > 1.0:
            status = "overloaded"
        elif used * (1.0 + m.load_margin) > 1.0:
            status = f"above the load margin ({100 * m.load_margin:g} %)"
        elif used < LOW_UTILISATION:
            status = f"below {100 * LOW_UTILISATION:g} %: %FS errors dominate"
        else:
            status = "ok"
        rows.append({"component": c, "load": load, "capacity": cap, "utilisation": used,
                     "status": status})
    return rows


def carries(m: Measurement, outputs: Mapping[str, float], capacity: Mapping[str, float]) -> bool:
    """Whether a balance of these capacities carries the expected loads with the margin."""
    return all(abs(float(outputs[c])) * (1.0 + m.load_margin) <= cap
               for c, cap in capacity.items())


def balance_inputs(inputs: Sequence[UncertainInput], m: Measurement) -> list[int]:
    """Indices of the inputs that are a balance component's indication error."""
    return [j for j, inp in enumerate(inputs)
            if inp.target.endswith("_indication") and inp.target[:-11] in m.capacity]


def balance_spec(inp: UncertainInput, m: Measurement, capacity: Mapping[str, float],
                 full_scale: Mapping[str, float]) -> InputSpec:
    """The specification of a balance input on a balance of ``capacity`` (and %FS accuracies
    ``full_scale``) instead of the written one (module docstring)."""
    component = inp.target[:-11]
    spec = inp.spec
    ratio = capacity[component] / m.capacity[component]
    if spec.size_kind == "accuracy":
        # the range as written (one- or two-sided) scaled with the capacity
        fraction = full_scale.get(component, spec.full_scale_fraction)
        span = spec.span * ratio if spec.span > 0.0 else capacity[component]
        unit = written_unit(spec.written.range_text.split(" to ")[-1]) or \
            DIMENSIONS[TARGETS[inp.target].dimension][1]
        text = f"{from_si(span, TARGETS[inp.target].dimension, unit):.6g} {unit}" + (
            " span" if " to " in spec.written.range_text else "")
        return replace(spec, fixed=spec.fixed - spec.full_scale_fraction * spec.span
                       + fraction * span, full_scale_fraction=fraction, span=span,
                       written=replace(spec.written, range_text=text))
    if spec.size.relative:
        return spec
    return replace(spec, size=Parsed(spec.size.value * ratio, spec.size.relative),
                   fixed=spec.fixed * ratio,
                   limit=None if spec.limit is None else Parsed(spec.limit.value * ratio,
                                                                spec.limit.relative))


def option_scale(inp: UncertainInput, m: Measurement, capacity: Mapping[str, float],
                 full_scale: Mapping[str, float]) -> float:
    """Tolerance scale a balance of ``capacity`` (and %FS accuracies ``full_scale``) gives one
    balance input at the set point: u on that balance over u as written."""
    return standard_uncertainty(balance_spec(inp, m, capacity, full_scale), inp.reading) \
        / inp.standard_uncertainty


def balances(m: Measurement) -> list[tuple[str, Mapping[str, float], Mapping[str, float], float]]:
    """The written balance and each option: ``(name, capacity, full_scale, price)`` (the written
    one with no %FS of its own: its inputs as written)."""
    return [(m.balance, m.capacity, {}, m.option_price or 0.0)] + [
        (o.name, o.capacity, o.full_scale, o.price) for o in m.options]


@dataclass(frozen=True, kw_only=True)
class Choices:
    """The balance as one grade choice: inputs it acts on, candidates, and who was left out."""

    indices: tuple[int, ...]
    #: (name, scale per input of ``indices``, price)
    candidates: tuple[tuple[str, np.ndarray, float], ...]
    excluded: tuple[str, ...]


def choices(inputs: Sequence[UncertainInput], m: Measurement,
            outputs: Mapping[str, float]) -> Choices:
    """The written balance and its options that carry the loads (module docstring)."""
    idx = balance_inputs(inputs, m)
    cands, out = [], []
    for name, cap, fs, price in balances(m):
        if not carries(m, outputs, cap):
            worst = max(cap, key=lambda c: abs(float(outputs[c])) / cap[c])
            moment = "moment" in worst
            load = abs(float(outputs[worst]))
            out.append(f"{name}: {worst.replace('_', ' ')} {load_text(load, moment)} of "
                       f"{load_text(cap[worst], moment)} (with the {100 * m.load_margin:g} % "
                       f"margin it needs {load_text(load * (1 + m.load_margin), moment)})")
            continue
        scales = np.array([option_scale(inputs[j], m, cap, fs) for j in idx]) \
            if name != m.balance or fs else np.ones(len(idx))
        cands.append((name, scales, float(price)))
    return Choices(indices=tuple(idx), candidates=tuple(cands), excluded=tuple(out))
