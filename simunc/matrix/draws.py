"""The draws of a matrix point: shared, per point and drifting, all derived from the seed.

In one trial (AIAA S-071A and ASME PTC 19.1 treatment of systematic and random errors; from
memory of those standards) a systematic input takes one draw for every point -- the uniforms of
the shared stream, mapped through each point's own distribution, so that a % of reading keeps
its meaning at every point -- and a random input a draw of its own at every point (the point's
stream, from its index).  A drifting input (``[[matrix.drift]]``) is random with memory: its
normal score follows ``z_k = rho z_(k-1) + sqrt(1 - rho^2) e_k`` along the points of a run, the
innovations e_k from each point's own stream, so successive points correlate by rho, points two
apart by rho^2, and each point keeps its marginal distribution.  Every draw depends only on the
seed and the point's index and place in its run -- never on which worker computes it or when --
so the shared draws stay shared across workers without shipping any array.
"""

from __future__ import annotations

import numpy as np
from scipy import special

from simunc.decisions.design import stream_seed
from simunc.uncertainty.sampling import copula_with_factor, correlation_factor, unit_block

#: Seed streams: the shared draw, then one per point from POINT_STREAM + index.
SHARED_STREAM = 7
POINT_STREAM = 1_000


def _own(seed: int, index: int, trials: int, d: int) -> np.ndarray:
    return unit_block("random", trials, d, stream_seed(seed, POINT_STREAM + index), 0)


def point_uniforms(seed: int, trials: int, systematic: np.ndarray, index: int,
                   run_before: tuple[int, ...] = (), drift: dict[int, float] | None = None,
                   copula: np.ndarray | None = None) -> np.ndarray:
    """Uniforms (trials by inputs) of the point ``index``: the shared stream's columns for the
    ``systematic`` inputs, the point's own for the others, and for each drifting input ``j ->
    rho`` the autoregression over the points ``run_before`` of its run (in order) and this one;
    with ``copula`` (normal-score correlation) the Gaussian copula of the inputs.

    >>> sys = np.array([True, False])
    >>> a = point_uniforms(1, 4, sys, 0); b = point_uniforms(1, 4, sys, 1)
    >>> bool(np.all(a[:, 0] == b[:, 0])), bool(np.any(a[:, 1] != b[:, 1]))
    (True, True)
    """
    d = systematic.size
    shared = unit_block("random", trials, d, stream_seed(seed, SHARED_STREAM), 0)
    u = np.where(systematic[None, :], shared, _own(seed, index, trials, d))
    if drift:
        before = [_own(seed, i, trials, d) for i in run_before]
        for j, rho in drift.items():
            z = None
            for own in before + [u]:
                e = special.ndtri(own[:, j])
                z = e if z is None else rho * z + np.sqrt(1.0 - rho * rho) * e
            u[:, j] = special.ndtr(z)
    if copula is not None:
        u = copula_with_factor(u, correlation_factor(copula, d))
    return u
