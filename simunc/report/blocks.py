"""Report blocks (headings, paragraphs, tables, figures, bullets) and value formatting."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from simunc.report.text import lit, two_digits
from simunc.study.catalogue import EXTRAPOLATED_OUTPUT, describe_output
from simunc.study.planning import output_dimension
from simunc.units import SI_DIMENSION, from_si, in_display_units, number, to_display, unit_text


@dataclass(frozen=True)
class Block:
    """``kind`` is one of heading, paragraph, table, figure, bullets.

    ``content`` is the text (heading, paragraph), the file name (figure), the items
    (bullets) or the formatted table (table).
    """

    kind: str
    content: str | list[str] | pd.DataFrame
    level: int = 2
    caption: str = ""


def fmt(v) -> str:
    if isinstance(v, (bool, np.bool_)):
        return "yes" if v else "no"
    if isinstance(v, (int, np.integer)):
        return str(v)
    if isinstance(v, (float, np.floating)):
        if not np.isfinite(v):
            return "n/a"
        if np.abs(v) < 1e-13:
            return "0"
        return number(float(v))
    return str(v)


def table(df: pd.DataFrame) -> pd.DataFrame:
    return df.map(fmt)


def rounded(df: pd.DataFrame, digits: int = 4) -> pd.DataFrame:
    """A table's numbers to ``digits`` significant digits (a value whose uncertainty the table
    does not give); yes/no, whole numbers and text as :func:`fmt`."""
    def cell(v):
        if isinstance(v, (float, np.floating)) and np.isfinite(v) and abs(v) >= 1e-13:
            return number(float(v), digits)
        return fmt(v)
    return df.map(cell)


def near(value: float, limit: float) -> str:
    """``value`` to two significant digits, or three when two would read as the limit."""
    text = two_digits(value)
    return text if value == limit or text != two_digits(limit) else two_digits(value, 3)


def achieved(c, study) -> str:
    """A requirement's achieved value as the test plan writes it: U in counts for the drag, in
    % where the limit is a %, in the unit the limit was written in (mbar, K), two significant
    digits (JCGM 100 7.2.6; three where two would read as the limit), a probability in %."""
    if c.kind != "expanded_uncertainty":
        p = 100 * c.value
        if p > 99.95 and c.value < 1.0:
            return "P > 99.9 %"
        text = f"{p:.1f}"
        return f"P = {text if text != f'{100 * c.limit:.1f}' or p == 100 * c.limit else f'{p:.2f}'} %"
    r = next((r for r in study.requirements + study.plan_requirements if r.key == c.key), None)
    if r is not None and r.relative and c.limit > 0:
        scale = 100 * r.limit / c.limit
        return f"U = {near(c.value * scale, c.limit * scale)} %"
    if c.output in ("drag_coefficient", EXTRAPOLATED_OUTPUT):
        return f"U = {near(c.value / 1e-4, c.limit / 1e-4)} counts"
    if r is not None and r.unit and r.output:
        dim = output_dimension(r.output)
        if dim != "dimensionless":
            return (f"U = {near(from_si(c.value, dim, r.unit), from_si(c.limit, dim, r.unit))} "
                    f"{unit_text(r.unit)}")
    unit = describe_output(c.output)[0] if c.output else ""
    return f"U = {near(c.value, c.limit)}" + (f" {unit}" if unit and unit != "1" else "")


def requirement_label(key: str) -> str:
    """``requirement[0]`` -> ``1``: requirements are numbered from 1 in the report."""
    head, _, rest = key.partition("[")
    return str(int(rest.rstrip("]")) + 1) if rest.rstrip("]").isdigit() else key


def engineering(rows, study, columns=(1,), unit_column=2, skip=()) -> list[tuple]:
    """Table rows with their SI values in the units the study was written in (bar, mm, °C:
    ``study.display_units``); ``columns`` hold the values, ``unit_column`` the SI unit; rows
    whose first cell is in ``skip`` (a temperature difference, say) stay in SI."""
    out = []
    for row in rows:
        row = list(row)
        si = row[unit_column]
        if row[0] not in skip:
            for c in columns:
                if isinstance(row[c], (float, int, np.floating)) and not isinstance(row[c], bool):
                    row[c], row[unit_column] = in_display_units(float(row[c]), si,
                                                                dict(study.display_units))
        out.append(tuple(row))
    return out


def displayed(values, unit: str, study) -> tuple[list[float], str]:
    """A value, its u and its interval ends (``values``: value, u, low, high, SI) in the unit the
    study writes that dimension in; the u is a difference (no offset of a Celsius scale)."""
    dim = SI_DIMENSION.get(unit)
    shown = study.display_units.get(dim) if dim else None
    if not dim or not shown or shown == unit:
        return list(values), unit
    value, u, *ends = values
    return ([to_display(value, dim, shown), from_si(u, "temperature_difference" if dim ==
                                                   "temperature" else dim, shown)]
            + [to_display(v, dim, shown) for v in ends]), unit_text(shown)


def allocation_changes(a) -> list[str]:
    """What an allocation asks for, one text per input it changes: the input and its allowed
    tolerance as the test plan writes it, with the grade chosen. An input the allocation
    leaves as written (a balance's, a grade kept) is no change."""
    changed = []
    if a.table is not None:
        for _, r in a.table.iterrows():
            if r["source"] != "as written" and abs(r["scale"] - 1.0) > 1e-9:
                changed.append(f"{lit(r['input'])} {lit(r['allowed'])}"
                               + (f" ({lit(r['source'])})" if r["source"] != "allocated" else ""))
    return changed


def cost_text(v: float) -> str:
    """A cost as a price list writes it: whole units, thousands apart.

    >>> cost_text(8781.12), cost_text(12000.0), cost_text(37.5)
    ('8 781', '12 000', '37.5')
    """
    return f"{v:,.0f}".replace(",", " ") if abs(v) >= 100 else f"{v:.3g}"
