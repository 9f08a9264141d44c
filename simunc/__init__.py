"""simunc: uncertainty-aware Monte Carlo similitude analysis for scale-model tests.

Python API (mirrors the command line)::

    import simunc
    study = simunc.load_study("studies/arven_cruise.toml")
    setpoint = simunc.solve(study)           # nominal matched set point
    result = simunc.run(study, trials=100_000, seed=3)
    result.statistics                        # pandas DataFrame, SI
    simunc.write_report(result, "out")       # report.md, report.html, results.json, figures
"""

__version__ = "0.1.0"

from .analysis import Result, run  # noqa: E402
from .errors import InfeasibleError, SimuncError, StudyError  # noqa: E402
from .report import write_report  # noqa: E402
from .setpoint import SetPoint, solve  # noqa: E402
from .study import Study, load_study, parse_study  # noqa: E402

__all__ = ["__version__", "load_study", "parse_study", "solve", "run", "write_report", "Study",
           "SetPoint", "Result", "SimuncError", "StudyError", "InfeasibleError"]
