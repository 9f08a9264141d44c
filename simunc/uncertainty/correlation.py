"""The correlation of uncertain inputs: one type, validated once, used by every engine."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, cast

import numpy as np

if TYPE_CHECKING:
    import pandas as pd

#: Smallest eigenvalue a correlation matrix may have and still count as positive definite
#: (below it, the Gaussian copula's Cholesky factor is not defined to working precision).
DEFINITE = 1e-10
#: Tolerance of the symmetry, unit-diagonal and |r| <= 1 checks.
_EXACT = 1e-12


@dataclass(frozen=True)
class Correlation:
    """Pearson correlation matrix of named inputs (JCGM 100:2008 5.2.2), checked once.

    The matrix must be square over ``names``, finite, symmetric, with a unit diagonal,
    entries in [-1, 1] and positive semi-definite (smallest eigenvalue >= -DEFINITE);
    :attr:`definite` says whether it is positive definite, as sampling through a Gaussian
    copula needs (a fully correlated pair, r = +-1, is allowed by the law of propagation
    but not by the copula).

    >>> c = Correlation(("a", "b"), np.array([[1.0, 0.6], [0.6, 1.0]]))
    >>> c.factor().round(3)
    array([[1. , 0. ],
           [0.6, 0.8]])
    >>> Correlation(("a", "b"), np.array([[1.0, 1.0], [1.0, 1.0]])).definite
    False
    """

    names: tuple[str, ...]
    matrix: np.ndarray

    def __post_init__(self) -> None:
        names = tuple(self.names)
        r = np.array(self.matrix, dtype=float)
        d = len(names)
        if len(set(names)) != d:
            raise ValueError(f"correlation names must be distinct, got {list(names)}")
        if r.shape != (d, d):
            raise ValueError(f"correlation matrix must be {d} x {d} (one row per input), "
                             f"got {r.shape}")
        if not np.all(np.isfinite(r)) or np.max(np.abs(r - r.T), initial=0.0) > _EXACT:
            raise ValueError("correlation matrix must be finite and symmetric")
        if np.max(np.abs(np.diag(r) - 1.0), initial=0.0) > _EXACT or \
                np.max(np.abs(r), initial=0.0) > 1.0 + _EXACT:
            raise ValueError("correlation matrix must have a unit diagonal and entries in [-1, 1]")
        if d and self._smallest(r) < -DEFINITE:
            raise ValueError(f"correlation matrix must be positive semi-definite (positive definite "
                             f"for sampling); its smallest eigenvalue is {self._smallest(r):.3g}: "
                             "the coefficients contradict each other")
        r.setflags(write=False)
        object.__setattr__(self, "names", names)
        object.__setattr__(self, "matrix", r)

    @staticmethod
    def _smallest(r: np.ndarray) -> float:
        return float(np.linalg.eigvalsh(r)[0])

    @property
    def smallest_eigenvalue(self) -> float:
        return self._smallest(self.matrix) if len(self.names) else 1.0

    @property
    def definite(self) -> bool:
        """Positive definite: smallest eigenvalue above :data:`DEFINITE`."""
        return self.smallest_eigenvalue > DEFINITE

    def factor(self) -> np.ndarray:
        """Lower Cholesky factor ``L`` (``R = L L^T``) for the Gaussian copula.

        Raises
        ------
        ValueError
            When the matrix is not positive definite.
        """
        if not self.definite:
            raise ValueError("correlation matrix must be positive definite")
        r = self.matrix
        return np.linalg.cholesky(0.5 * (r + r.T))

    @classmethod
    def coerce(cls, correlation: object, names: Sequence[str]) -> "Correlation":
        """A :class:`Correlation` over ``names`` from a Correlation, a matrix (rows in the
        order of ``names``), a DataFrame labelled with names, or a mapping
        ``{(a, b): r}`` (unlisted pairs uncorrelated)."""
        names = tuple(names)
        if isinstance(correlation, Correlation):
            if correlation.names == names:
                return correlation
            idx = [correlation.names.index(n) for n in names]
            return cls(names, correlation.matrix[np.ix_(idx, idx)])
        if hasattr(correlation, "reindex"):  # a pandas DataFrame labelled with input names
            frame = cast("pd.DataFrame", correlation)
            unknown = (set(frame.index) | set(frame.columns)) - set(names)
            if unknown:
                raise ValueError(f"correlation matrix names unknown inputs: {sorted(unknown)}")
            r = frame.reindex(index=list(names), columns=list(names)).to_numpy(dtype=float)
            r = np.where(np.isnan(r), 0.0, r)
            np.fill_diagonal(r, 1.0)
            return cls(names, r)
        if isinstance(correlation, Mapping):
            r = np.eye(len(names))
            pos = {n: i for i, n in enumerate(names)}
            for pair, value in correlation.items():
                a, b = pair
                if a not in pos or b not in pos:
                    raise ValueError(f"correlation names unknown inputs: {pair!r}")
                if a == b:
                    raise ValueError(f"correlation of an input with itself: {pair!r}")
                r[pos[a], pos[b]] = r[pos[b], pos[a]] = float(value)
            return cls(names, r)
        return cls(names, np.asarray(correlation, dtype=float))
