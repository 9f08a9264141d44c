"""Variance-based (Sobol) sensitivity indices through SALib.

The Saltelli sample matrices are drawn on the unit hypercube by SALib
(scrambled Sobol sequence) and mapped through each input's inverse CDF, so any
input distribution is allowed.  First-order ``S1`` and total ``ST`` indices
come with bootstrap confidence intervals.

References
----------
.. [1] A. Saltelli et al., "Variance based sensitivity analysis of model
   output. Design and estimator for the total sensitivity index", Computer
   Physics Communications 181 (2010) 259-270.
.. [2] J. Herman, W. Usher, "SALib: An open-source Python library for
   Sensitivity Analysis", JOSS 2(9), 2017.
"""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
from SALib.analyze import sobol as sobol_analyze
from SALib.sample import sobol as sobol_sample

from .propagate import Problem


def sobol_indices(problem: Problem, outputs, base_samples: int = 4096, seed: int = 1,
                  confidence: float = 0.95) -> dict[str, pd.DataFrame]:
    """First-order and total Sobol indices of each output.

    Parameters
    ----------
    problem : Problem
        Vectorized model with independent inputs.
    outputs : sequence of str
        Output keys to analyse.
    base_samples : int
        Base sample size N (a power of two); the model is evaluated
        ``N (d + 2)`` times.
    seed : int
        Seed of the scrambling and of the bootstrap.
    confidence : float
        Level of the bootstrap confidence intervals.

    Returns
    -------
    dict of DataFrame
        Per output, indexed by input name, columns ``S1``, ``S1_conf``,
        ``ST``, ``ST_conf`` (``*_conf`` is the half-width of the interval).
        An output that does not vary gets zeros.
    """
    d = problem.dimension
    salib_problem = {"num_vars": d, "names": list(problem.names), "bounds": [[0.0, 1.0]] * d}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        u = sobol_sample.sample(salib_problem, base_samples, calc_second_order=False,
                                scramble=True, seed=seed)
    y = problem.evaluate_unit(u)
    result = {}
    for name in outputs:
        values = np.ascontiguousarray(y[name], dtype=float)
        if np.ptp(values) <= 1e-12 * max(1.0, float(np.max(np.abs(values)))):
            table = pd.DataFrame(0.0, index=list(problem.names), columns=["S1", "S1_conf", "ST", "ST_conf"])
        else:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                res = sobol_analyze.analyze(salib_problem, values, calc_second_order=False,
                                            conf_level=confidence, num_resamples=200, seed=seed)
            table = pd.DataFrame({k: res[k] for k in ("S1", "S1_conf", "ST", "ST_conf")},
                                 index=list(problem.names))
        table.index.name = "input"
        result[name] = table
    return result
