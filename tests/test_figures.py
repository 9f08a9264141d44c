"""Figures that answer something: one histogram per matched group and required output with the
study's band and limits, requirement limits on the sweeps, labelled envelope points and the
cavitation envelope in its own coordinates.

The expected bands and limits are read from the study files here (tomllib), with the rules of
docs/study-file.md ("[[requirement]]": a % limit is a fraction of the set-point value; ``within``
is about the band centre, 1 for a ratio and 0 for the Mach difference).  The cavitation number is
checked against sigma = (p - p_v) / (rho U^2 / 2) (the definition in any fluid-mechanics
handbook, e.g. White, Fluid Mechanics, section 5.5 (from memory of White)) with the water
properties of CoolProp (IAPWS-95) as the reference library.
"""

from __future__ import annotations

import io
import itertools
import tomllib
import types

import matplotlib.image
import matplotlib.pyplot as plt
import numpy as np
import pytest

from simunc.pipeline import TrialMonitor, prepare, run
from simunc.report import write_report
from simunc.report.figures import (
    envelope_figure,
    histogram_figure,
    histogram_files,
    histogram_marks,
    sweep_figure,
)
from simunc.similitude.envelope import envelope
from simunc.similitude.setpoint import build_model, solve
from simunc.similitude.testplan import plan
from simunc.study.readers import load_study, parse_study

from .conftest import DEMO, ROOT
from .test_setpoint import base_study

KESTREL = ROOT / "studies" / "kestrel_reynolds_gap.toml"
#: Output of a matched group as docs/study-file.md names it: a ratio, the Mach number a difference.
GROUP_OUTPUT = {"reynolds": "reynolds_ratio", "mach": "mach_difference", "froude": "froude_ratio"}


def _expected_outputs(path) -> set[str]:
    """Matched groups' outputs and requirement outputs of a study file, the extrapolated drag
    (formed by the split-test plan, not by the trials) left out."""
    data = tomllib.loads(path.read_text())
    out = {GROUP_OUTPUT[g] for g in data["match"] if g != "solve_for"}
    for r in data.get("requirement", []):
        if "group" in r:
            out.add(GROUP_OUTPUT[r["group"]])
        elif "output" in r and r["output"] != "drag_coefficient_extrapolated":
            out.add(r["output"])
    return out


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    result = run(load_study(DEMO), trials=20_000, seed=7)
    out = tmp_path_factory.mktemp("figures")
    write_report(result, out)
    return result, out


def test_histogram_files_are_the_matched_and_required_outputs(demo):
    result, out = demo
    expected = _expected_outputs(DEMO)
    assert expected == {"reynolds_ratio", "mach_difference"}
    assert set(result.preview) == expected
    names = {p.name for p in out.glob("*histogram*.png")}
    assert names == {f"histogram_{k}.png" for k in expected}
    assert set(histogram_files(result).values()) == names
    md = (out / "report.md").read_text()
    assert all(f"({n})" in md for n in names)  # each placed in the report


def test_figures_decode_as_png(demo):
    _, out = demo
    for p in sorted(out.glob("*.png")):
        image = matplotlib.image.imread(p)
        assert image.ndim == 3 and image.shape[0] > 200 and image.shape[1] > 300, p.name
        assert np.ptp(image[..., :3]) > 0.5, p.name  # not a blank image


def test_kestrel_previews_the_drag_but_not_its_extrapolation():
    study = load_study(KESTREL)
    prep = prepare(study)
    expected = _expected_outputs(KESTREL)
    assert expected == {"reynolds_ratio", "mach_difference", "drag_coefficient"}
    monitor = TrialMonitor(study, prep.model)
    trials = {k: np.atleast_1d(v) for k, v in prep.setpoint.outputs.items()}
    assert set(monitor.previewed(trials)) == expected
    # the study limits the extrapolated drag too: a requirement on the plan, no trial output
    assert "drag_coefficient_extrapolated" in {r.output for r in study.plan_requirements}
    assert "drag_coefficient_extrapolated" not in trials


def _axis_marks(ax):
    """Band spans and requirement lines drawn on a histogram, by their gid."""
    spans = {p.get_gid(): (p.get_x(), p.get_x() + p.get_width()) for p in ax.patches
             if p.get_gid() and p.get_gid().startswith("band")}
    lines = {ln.get_gid(): float(ln.get_xdata()[0]) for ln in ax.lines if ln.get_gid()}
    return spans, lines


def test_histogram_draws_the_study_band_and_limits(demo):
    result, _ = demo
    data = tomllib.loads(DEMO.read_text())
    stats = result.statistics

    # Reynolds ratio: band 1 +- 2 % (study), requirement 1 "U <= 1.5 %" of the set-point value
    # about the Monte Carlo mean (docs/study-file.md, [[requirement]])
    assert data["match"]["reynolds"]["tolerance"] == "2 %"
    assert data["requirement"][0] == {"group": "reynolds", "expanded_uncertainty": "1.5 %"}
    fig = histogram_figure(result, "reynolds_ratio")
    spans, lines = _axis_marks(fig.axes[0])
    assert spans == {"band 0": pytest.approx((0.98, 1.02), abs=1e-12)}
    half = 0.015 * result.setpoint.outputs["reynolds_ratio"]
    mean = stats.loc["reynolds_ratio", "mean"]
    assert lines["limit 1 low"] == pytest.approx(mean - half, rel=1e-12)
    assert lines["limit 1 high"] == pytest.approx(mean + half, rel=1e-12)
    assert lines["nominal"] == stats.loc["reynolds_ratio", "nominal"]
    labels = fig.axes[0].get_legend_handles_labels()[1]
    assert any(t.startswith("requirement 1: mean ± 0.015") for t in labels), labels
    assert fig.axes[0].get_xlabel() == "Reynolds number rho U L / mu: model / full scale"
    plt.close(fig)

    # Mach difference: band 0 +- 0.002, requirement 2 within 0.0012 about the band centre 0
    assert data["match"]["mach"]["tolerance"] == "0.002"
    assert data["requirement"][1]["within"] == 0.0012
    fig = histogram_figure(result, "mach_difference")
    spans, lines = _axis_marks(fig.axes[0])
    assert spans == {"band 0": pytest.approx((-0.002, 0.002), abs=1e-15)}
    assert (lines["limit 1 low"], lines["limit 1 high"]) == pytest.approx((-0.0012, 0.0012),
                                                                          abs=1e-15)
    assert (lines["coverage low"], lines["coverage high"]) == (
        stats.loc["mach_difference", "low"], stats.loc["mach_difference", "high"])
    plt.close(fig)


def test_far_band_is_stated_not_drawn(demo):
    result, _ = demo
    marks = histogram_marks(result, "reynolds_ratio")
    assert all(m.drawn for m in marks)
    # the same band about a far centre: the Reynolds ratio of the towing-tank demo is about
    # 1/150 (its comment), 1 +- 5 % is hundreds of interval half-widths away
    row = result.statistics.loc["reynolds_ratio"]
    moved = row.copy()
    for c in ("low", "high", "mean", "nominal"):
        moved[c] = row[c] / 150.0
    stats = result.statistics.copy()
    stats.loc["reynolds_ratio"] = moved
    shifted = types.SimpleNamespace(**{k: getattr(result, k) for k in (
        "study", "requirement_checks")}, statistics=stats)
    marks = histogram_marks(shifted, "reynolds_ratio")
    band = next(m for m in marks if m.kind == "band")
    assert not band.drawn and "not drawn" in band.label


def test_sweeps_mark_the_requirements(demo):
    result, _ = demo
    one, two = result.sweeps
    fig = sweep_figure(result, one)
    (lane,) = [ax for ax in fig.axes if ax.get_gid() == "requirements"]
    assert [t.get_text() for t in lane.get_yticklabels()] == [
        "requirement 1", "requirement 2", "requirement 3"]
    s = one.table[f"scale: {one.inputs[0]}"].to_numpy()
    for i, req in enumerate(result.study.requirements):
        met = one.table[f"met_{req.key}"].to_numpy(dtype=bool)
        drawn = {ln.get_gid(): ln.get_xdata() for ln in lane.lines if ln.get_gid()}
        np.testing.assert_array_equal(drawn[f"requirement {i + 1} met"], s[met])
        np.testing.assert_array_equal(drawn[f"requirement {i + 1} not met"], s[~met])
    plt.close(fig)

    # 2-D: no empty panel, no panel or colour bar (with its labels) over another
    fig = sweep_figure(result, two)
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    panels = [ax for ax in fig.axes if ax.get_label() != "<colorbar>"]
    assert all(ax.collections for ax in panels)  # every panel draws contours
    assert not any(ax.texts and "constant" in ax.texts[0].get_text() for ax in panels)
    boxes = [ax.get_tightbbox(renderer) for ax in fig.axes]
    for (i, a), (j, b) in itertools.combinations(enumerate(boxes), 2):
        overlap_x = min(a.x1, b.x1) - max(a.x0, b.x0)
        overlap_y = min(a.y1, b.y1) - max(a.y0, b.y0)
        assert overlap_x <= 1.0 or overlap_y <= 1.0, (fig.axes[i].get_label(),
                                                       fig.axes[j].get_label())
    labels = [t.get_text() for t in fig.legends[0].get_texts()]
    assert any(t.startswith("requirement 1") for t in labels), labels
    assert not any("requirement[" in t for t in labels)
    plt.close(fig)


def test_envelope_labels_set_point_and_planned_runs():
    d = base_study()
    d["model"] = {"scale": 0.025}  # Reynolds number out of reach: a split-test plan
    study = parse_study(d)
    model = build_model(study)
    sp = solve(study, model)
    tp = plan(study, model, sp)
    result = types.SimpleNamespace(envelope=envelope(study, model, sp), test_plan=tp, matrix=None)
    fig = envelope_figure(result)
    ax = fig.axes[0]
    labels = ax.get_legend_handles_labels()[1]
    assert {"set point", "full scale (target)"} <= set(labels)
    sweep = [r.label for r in tp.runs if r.label.startswith("B")]
    assert f"runs {sweep[0]}-{sweep[-1]}: Reynolds sweep" in labels
    assert any(t.startswith("run A: ") for t in labels)
    notes = {t.get_text(): t.xy for t in ax.texts}
    for r in tp.runs:
        if r.label.startswith("B"):
            assert notes[r.label] == pytest.approx((r.outputs["mach_model"],
                                                    r.outputs["reynolds_model"]))
    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    plt.close(fig)
    assert matplotlib.image.imread(io.BytesIO(buf.getvalue()), format="png").shape[2] in (3, 4)


def _water_tunnel() -> dict:
    """A water tunnel matching the cavitation number of a fresh-water full scale (keys of
    docs/study-file.md; invented values, not a check value)."""
    return {
        "title": "cavitation-number envelope (invented)",
        "full_scale": {"fluid": "fresh_water", "static_temperature": "15 degC",
                       "static_pressure": "130 kPa", "speed": "8 m/s",
                       "reference_length": "4 m"},
        "facility": {"name": "water tunnel", "fluid": "fresh_water", "temperature": "20 degC",
                     "speed_range": ["1 m/s", "12 m/s"], "static_pressure": "50 kPa",
                     "static_pressure_range": ["20 kPa", "200 kPa"]},
        "model": {"scale": 0.1},
        "match": {"solve_for": "speed", "cavitation": {"tolerance": "1 %"}},
        "run": {"trials": 2000, "seed": 1},
    }


def _sigma(p, t, u):
    """sigma = (p - p_v) / (rho U^2 / 2) with IAPWS-95 water from CoolProp."""
    from CoolProp.CoolProp import PropsSI
    p_v = PropsSI("P", "T", t, "Q", 0, "Water")
    rho = PropsSI("D", "T", t, "P", p, "Water")
    return (p - p_v) / (0.5 * rho * u**2)


def test_cavitation_envelope_against_the_definition():
    study = parse_study(_water_tunnel())
    model = build_model(study)
    sp = solve(study, model)
    env = envelope(study, model, sp)
    cav = env.cavitation
    assert cav is not None and sp.feasible
    t_tunnel, t_full = 293.15, 288.15
    u = sp.outputs["speed"]
    # the tunnel at its set static pressure matches the full scale's sigma (Tanaka/IAPWS
    # water of simunc against IAPWS-95: density within 1e-5, vapour pressure within 1e-5)
    assert cav.setpoint == pytest.approx((u, _sigma(50e3, t_tunnel, u)), rel=1e-4)
    assert cav.target == pytest.approx(_sigma(130e3, t_full, 8.0), rel=1e-4)
    assert cav.setpoint[1] == pytest.approx(cav.target, rel=1e-6)  # matched
    # one temperature: the band's edges are the static-pressure range's ends at each speed
    ((length, lo, hi),) = cav.bands.values()
    assert length == pytest.approx(0.4)
    assert cav.speed[0] == pytest.approx(1.0) and cav.speed[-1] == pytest.approx(12.0)
    for v, s_lo, s_hi in list(zip(cav.speed, lo, hi))[::15]:
        assert s_lo == pytest.approx(_sigma(20e3, t_tunnel, v), rel=1e-4)
        assert s_hi == pytest.approx(_sigma(200e3, t_tunnel, v), rel=1e-4)

    fig = envelope_figure(types.SimpleNamespace(envelope=env, test_plan=plan(study, model, sp),
                                                matrix=None))
    ax = fig.axes[0]
    assert ax.get_xlabel() == "facility speed U [m/s]"
    assert ax.get_ylabel().startswith("cavitation number")
    marker = next(ln for ln in ax.lines if ln.get_label() == "set point")
    assert (marker.get_xdata()[0], marker.get_ydata()[0]) == pytest.approx(cav.setpoint)
    plt.close(fig)


def test_gas_study_has_no_cavitation_envelope(demo):
    result, _ = demo
    assert result.envelope.cavitation is None
    assert result.envelope.abscissa == "mach"


def test_histogram_names_are_report_names():
    from simunc.report.folder import is_report_name
    assert is_report_name("histogram_reynolds_ratio.png") and is_report_name("histogram_3.png")
    # the one histogram of earlier reports stays simunc's own, so a new run removes it
    assert is_report_name("reynolds_ratio_histogram.png")
    assert not is_report_name("my_histogram.png")
