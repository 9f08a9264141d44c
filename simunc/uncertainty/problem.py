"""The problem type every engine takes: named inputs, their distributions, one vectorized
function."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Mapping, Protocol, Sequence

import numpy as np

from simunc.uncertainty.sampling import map_to_inputs


class FrozenDistribution(Protocol):
    """What simunc calls on a frozen scipy.stats distribution (scipy ships no type hints)."""

    def mean(self) -> float: ...

    def std(self) -> float: ...

    def support(self) -> tuple[float, float]: ...

    def ppf(self, q: np.ndarray) -> np.ndarray: ...


@dataclass(frozen=True)
class Problem:
    """A vectorized model with named, independent uncertain inputs.

    Attributes
    ----------
    names : sequence of str
        Input names, one per column of a sample matrix.
    distributions : sequence
        Frozen scipy.stats distributions, in the order of ``names``.
    func : callable
        ``func(dict name -> ndarray) -> dict output -> ndarray``.
    """

    names: Sequence[str]
    distributions: Sequence[FrozenDistribution]
    func: Callable[[Mapping[str, np.ndarray]], Mapping[str, np.ndarray]]

    @property
    def dimension(self) -> int:
        return len(self.names)

    def evaluate(self, x: np.ndarray) -> dict[str, np.ndarray]:
        """Evaluate on an ``(n, d)`` matrix of input values (one output value per row)."""
        with np.errstate(all="ignore"):  # non-finite trials are reported by the caller
            out = self.func({n: x[:, j] for j, n in enumerate(self.names)})
        return {k: np.broadcast_to(v, (x.shape[0],)) for k, v in out.items()}

    def evaluate_unit(self, u: np.ndarray) -> dict[str, np.ndarray]:
        """Evaluate on an ``(n, d)`` matrix of points of the unit hypercube."""
        return self.evaluate(map_to_inputs(u, self.distributions))
