"""Report blocks (headings, paragraphs, tables, figures, bullets) and value formatting."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd


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
