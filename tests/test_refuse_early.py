"""Bad sizes are refused before the work they would waste, naming the key at fault (issue 11).

The contract is simunc's own (README: bad input ends in exit 2 with one line naming the key),
so no outside source is involved; the physical facts used are definitions (a length is
positive).
"""

from __future__ import annotations

import pytest

import simunc
import simunc.pipeline as pipeline
import simunc.similitude.prepared as prepared
from simunc.cli import main
from simunc.errors import StudyError

CHORD = 'distribution = "rectangular"\nhalf_width = "0.05 mm"'


def _write(tmp_path, text: str):
    path = tmp_path / "study.toml"
    path.write_text(text)
    return path


def _nothing_may_run(monkeypatch):
    def boom(*a, **k):
        raise AssertionError("the run started")
    monkeypatch.setattr(pipeline, "monte_carlo_stage", boom)
    monkeypatch.setattr(pipeline, "prepare", boom)


def _one_line(capsys) -> str:
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1, err
    return err[0]


@pytest.mark.parametrize("u,shapley,sample", [("60 mm", "false", "Sobol sample"),
                                               ("50 mm", "true", "Shapley sample")])
def test_non_physical_sensitivity_sample_names_the_input(u, shapley, sample, demo_text, tmp_path,
                                                         monkeypatch):
    # The model chord (200 mm) with u = 50 or 60 mm: the Sobol sample (4096 base points, out to
    # about 3.7 u) or the Shapley sample (2^17 normal draws, out to about 4.4 u) reaches chords
    # <= 0. With the load-time check moved to the 1e-3 quantile (3.1 u) the study prepares, and
    # the sample must end in the one-line error naming the input.
    monkeypatch.setattr(prepared, "EXTREME_TAIL", 1e-3)
    text = demo_text.replace(CHORD, f'distribution = "normal"\nstandard_uncertainty = "{u}"')
    text = text.replace("second_order = true", f"second_order = true\nshapley = {shapley}")
    prep = simunc.prepare(simunc.load_study(_write(tmp_path, text)))
    with pytest.raises(StudyError) as info:
        pipeline.sensitivity_stage(prep, None)  # type: ignore[arg-type]
    assert info.value.key == "uncertain[6].standard_uncertainty"
    assert sample in str(info.value) and "model length <= 0" in str(info.value)


def test_check_refuses_what_run_would_refuse(demo_text, tmp_path, capsys):
    text = demo_text.replace(CHORD, 'distribution = "normal"\nstandard_uncertainty = "50 mm"')
    assert main(["check", str(_write(tmp_path, text))]) == 2
    line = _one_line(capsys)
    assert "'uncertain[6].standard_uncertainty'" in line and "given 50 mm" in line
    assert "model length <= 0" in line


def test_samples_refused_before_anything_runs(demo_text, tmp_path, capsys, monkeypatch):
    path = _write(tmp_path, demo_text)
    _nothing_may_run(monkeypatch)
    code = main(["run", str(path), "--trials", "3000000", "--samples", "csv", "--out",
                 str(tmp_path / "r")])
    assert code == 2
    line = _one_line(capsys)
    assert "'--samples'" in line and "3000000 trials" in line and "2000000" in line


def test_samples_of_an_adaptive_run_refused_before_anything_runs(demo_text, tmp_path, capsys,
                                                                  monkeypatch):
    path = _write(tmp_path, demo_text.replace("trials = 200000", 'trials = "adaptive"'))
    _nothing_may_run(monkeypatch)
    assert main(["run", str(path), "--samples", "csv", "--out", str(tmp_path / "r")]) == 2
    assert "run.max_trials" in _one_line(capsys)


@pytest.mark.parametrize("target,key", [
    ("propagate", "run.trials"),
    ("sobol_analysis", "run.sobol_base_samples"),
    ("Design", "design.trials"),
])
def test_out_of_memory_names_the_stage_that_ran_out(target, key, demo_text, tmp_path, capsys,
                                                    monkeypatch):
    def no_memory(*a, **k):
        raise MemoryError
    monkeypatch.setattr(pipeline, target, no_memory)
    path = _write(tmp_path, demo_text)
    code = main(["run", str(path), "--trials", "200", "--out", str(tmp_path / "r")])
    assert code == 2
    line = _one_line(capsys)
    assert f"'{key}'" in line and "not enough memory" in line
    if key != "run.sobol_base_samples":
        assert "sobol_base_samples" not in line


def test_cli_sweep_too_large_refused_before_anything_runs(demo_text, tmp_path, capsys,
                                                           monkeypatch):
    path = _write(tmp_path, demo_text)
    monkeypatch.setattr(pipeline, "monte_carlo_stage", lambda *a, **k: pytest.fail("ran"))
    code = main(["sweep", str(path), "--input", "T0 thermometer", "--input", "T0 control stability",
                 "--points", "101", "--out", str(tmp_path / "r")])
    assert code == 2
    line = _one_line(capsys)
    assert "'--points'" in line and "max_sweep_evaluations" in line
    code = main(["sweep", str(path), "--input", "T0 thermometer", "--points", "150", "--out",
                 str(tmp_path / "r")])
    assert code == 2 and "at most 101 points" in _one_line(capsys)


def test_check_warns_about_likely_slips(demo_text, tmp_path, capsys):
    text = demo_text.replace('mach = { tolerance = "0.002" }', 'mach = { tolerance = "0.3" }')
    text = text.replace('reynolds = { tolerance = "2 %" }', "reynolds = { tolerance = 2 }")
    assert main(["check", str(_write(tmp_path, text))]) == 0
    out = capsys.readouterr().out
    assert "warning: match.mach.tolerance = 0.3 is a Mach-number difference, not a fraction: " \
           "did you mean 0.003" in out
    assert "warning: match.reynolds.tolerance = 2 is a fraction (200 % of the full-scale value): " \
           "did you mean '2 %'?" in out


def test_demo_studies_have_no_slip_warnings(capsys):
    from pathlib import Path
    for p in sorted((Path(__file__).resolve().parent.parent / "studies").glob("*.toml")):
        assert main(["check", str(p)]) == 0
        assert "warning:" not in capsys.readouterr().out, p


def test_enlarged_model_accepted_with_the_flag(demo_text, tmp_path, capsys):
    text = demo_text.replace("scale = 0.0625", "scale = 2.5\nenlarged = true")
    assert main(["check", str(_write(tmp_path, text))]) == 0
    assert "model reference length = 8 m" in capsys.readouterr().out


def test_solve_for_with_surrounding_spaces_is_the_name(demo_text, tmp_path):
    plain = simunc.load_study(_write(tmp_path, demo_text))
    spaced = simunc.load_study(_write(tmp_path, demo_text.replace(
        'solve_for = "stagnation_pressure"', 'solve_for = "  stagnation_pressure "')))
    assert spaced.solve_for == plain.solve_for == ("stagnation_pressure",)


def test_progress_is_reported_for_the_long_stages(demo_text, tmp_path):
    calls = []
    text = demo_text + "\n[design]\ntrials = 1000\nverify_trials = 1000\n"
    study = simunc.load_study(_write(tmp_path, text))
    simunc.run(study, trials=200, parts=("sweeps",), progress=lambda *a: calls.append(a))
    stages = [c[0] for c in calls]
    assert stages[0] == "Monte Carlo trials" and calls[0][1:] == (200, 200)
    assert "Sobol indices" in stages
    sweeps = [c for c in calls if c[0].startswith("tolerance sweeps")]
    # 15 points and scale 1 added on the first sweep, 9 x 9 + 1 per input on the second
    assert [c[1] for c in sweeps] == list(range(1, 16 + 100 + 1)) and sweeps[-1][2] == 116
