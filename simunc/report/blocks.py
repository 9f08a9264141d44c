"""Report blocks (headings, paragraphs, tables, figures, bullets) and value formatting."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from simunc.report.text import two_digits
from simunc.study.catalogue import EXTRAPOLATED_OUTPUT, describe_output
from simunc.study.written import unit_text
from simunc.units import to_display


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
        return f"{v:.6g}"
    return str(v)


def table(df: pd.DataFrame) -> pd.DataFrame:
    return df.map(fmt)


def achieved(c, study) -> str:
    """A requirement's achieved value as the test plan writes it: U in counts for the drag, in
    % where the limit is a %, two significant digits (JCGM 100 7.2.6), a probability in %."""
    if c.kind != "expanded_uncertainty":
        return f"P = {100 * c.value:.1f} %"
    r = next((r for r in study.requirements if r.key == c.key), None)
    if r is not None and r.relative and c.limit > 0:
        return f"U = {two_digits(100 * c.value * r.limit / c.limit)} %"
    if c.output in ("drag_coefficient", EXTRAPOLATED_OUTPUT):
        return f"U = {two_digits(c.value / 1e-4)} counts"
    unit = describe_output(c.output)[0] if c.output else ""
    return f"U = {two_digits(c.value)}" + (f" {unit}" if unit and unit != "1" else "")


def requirement_label(key: str) -> str:
    """``requirement[0]`` -> ``1``: requirements are numbered from 1 in the report."""
    head, _, rest = key.partition("[")
    return str(int(rest.rstrip("]")) + 1) if rest.rstrip("]").isdigit() else key


#: SI units of values a report shows in the study's own units, and their dimensions.
_SI_DIMENSION = {"Pa": "pressure", "K": "temperature", "m": "length", "m/s": "speed"}


def engineering(rows, study, columns=(1,), unit_column=2, skip=()) -> list[tuple]:
    """Table rows with their SI values in the units the study was written in (bar, mm, °C:
    ``study.display_units``); ``columns`` hold the values, ``unit_column`` the SI unit; rows
    whose first cell is in ``skip`` (a temperature difference, say) stay in SI."""
    out = []
    for row in rows:
        row = list(row)
        dim = _SI_DIMENSION.get(row[unit_column])
        shown = study.display_units.get(dim) if dim else None
        if dim and shown and shown != row[unit_column] and row[0] not in skip:
            for c in columns:
                if isinstance(row[c], (float, int, np.floating)) and not isinstance(row[c], bool):
                    row[c] = to_display(float(row[c]), dim, shown)
            row[unit_column] = unit_text(shown)
        out.append(tuple(row))
    return out
