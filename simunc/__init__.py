"""simunc: uncertainty-aware Monte Carlo similitude analysis for scale-model tests.

Python API (mirrors the command line)::

    import simunc
    study = simunc.load_study("studies/arven_cruise.toml")
    setpoint = simunc.solve(study)           # nominal matched set point
    result = simunc.run(study, trials=100_000, seed=3)
    result.statistics                        # pandas DataFrame, SI
    simunc.write_report(result, "out")       # report.md, report.html, results.json, figures

The names are imported on first use, so ``import simunc.physics.fluids`` (say) does not
load the report machinery.
"""

from importlib import import_module

__version__ = "0.1.0"

_API = {
    "load_study": "study.readers", "parse_study": "study.readers", "Study": "study.schema",
    "solve": "similitude.setpoint", "SetPoint": "similitude.setpoint",
    "prepare": "pipeline", "Prepared": "pipeline", "run": "pipeline", "Result": "pipeline",
    "write_report": "report",
    "SimuncError": "errors", "StudyError": "errors",
}

__all__ = ["__version__", *_API]


def __getattr__(name: str):
    if name in _API:
        value = getattr(import_module(f".{_API[name]}", __name__), name)
        if _API[name] == "pipeline":  # a Result shows its verdict in a notebook
            import_module(".report.notebook", __name__)
        return value
    raise AttributeError(f"module 'simunc' has no attribute {name!r}")
