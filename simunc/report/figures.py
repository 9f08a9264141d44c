"""Figures of a run, rendered in memory to PNG bytes (matplotlib, Agg backend).

Study text (input and group names) is drawn as written: folded to one line without control
characters (:func:`simunc.errors.plain`) and with matplotlib's mathtext and TeX off
(:func:`_literal_text`), so a ``$`` in a name is a dollar sign, not a formula to parse.
"""

from __future__ import annotations

import functools
import io
import re
from dataclasses import dataclass

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import matplotlib.ticker as ticker  # noqa: E402
import numpy as np  # noqa: E402

from simunc.errors import plain  # noqa: E402
from simunc.report.blocks import requirement_label  # noqa: E402
from simunc.report.text import two_digits  # noqa: E402
from simunc.study.catalogue import describe_output  # noqa: E402

#: Text drawn as written: no mathtext between "$" signs, no TeX (a user's matplotlibrc may set it).
LITERAL_TEXT = {"text.parse_math": False, "text.usetex": False}


def _literal_text(draw):
    """Draw a figure with :data:`LITERAL_TEXT` (text artists read it when made and drawn)."""
    @functools.wraps(draw)
    def wrapped(*args, **kwargs):
        with matplotlib.rc_context(LITERAL_TEXT):
            return draw(*args, **kwargs)
    return wrapped


def _png(fig) -> bytes:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=110, bbox_inches="tight")
    plt.close(fig)
    return buf.getvalue()


#: A band or limit whose edges lie further than this many half-widths of the coverage interval
#: from the interval's centre is stated in the legend only: drawn, it would squeeze the trials
#: into a spike (common practice, no source).
FAR = 20.0


@dataclass(frozen=True, kw_only=True)
class HistogramMark:
    """A pair of limits a histogram draws: a tolerance band or a requirement's limit.

    ``low``/``high`` in the output's SI unit; ``drawn``: shaded on the axis (else stated in the
    legend only, see :data:`FAR`); ``kind``: ``"band"`` or ``"requirement"``.
    """

    kind: str
    low: float
    high: float
    label: str
    drawn: bool


def histogram_files(result) -> dict[str, str]:
    """Output -> file name of its histogram, for every output the Result previews:
    ``histogram_<output>.png`` (``histogram_<n>.png``, n counted from 1, for an output whose
    name is not plain lower-case letters, digits and underscores, e.g. a user group's)."""
    return {k: f"histogram_{k}.png" if re.fullmatch(r"[a-z0-9_]+", k) else f"histogram_{n}.png"
            for n, k in enumerate(result.preview, start=1)}


def histogram_marks(result, output: str) -> list[HistogramMark]:
    """The band and the requirement limits a histogram of ``output`` draws, read from the Result.

    A matched group: its band centre +- tolerance.  A requirement on the output, with the
    interval its check judged (``Check.centre``, ``Check.half_width``: a % limit already a
    fraction of the set-point value, see :func:`simunc.decisions.requirements.judged`): an
    expanded uncertainty as the Monte Carlo mean +- the limit of U; a ``within`` as its centre
    (the band centre, else the set-point value) +- its limit.  A requirement the run did not
    check is left out.
    """
    row = result.statistics.loc[output]
    centre, half = 0.5 * (row["high"] + row["low"]), 0.5 * (row["high"] - row["low"])

    def mark(kind: str, low: float, high: float, label: str) -> HistogramMark:
        far = max(abs(low - centre), abs(high - centre)) > FAR * half
        return HistogramMark(kind=kind, low=float(low), high=float(high), drawn=not far,
                             label=label + (" (far outside the trials: not drawn)" if far else ""))

    marks = []
    for band in result.study.bands:
        if band.output == output:
            marks.append(mark("band", band.centre - band.tolerance, band.centre + band.tolerance,
                              f"tolerance band {band.centre:g} ± {band.tolerance:.3g}"))
    checks = {c.key: c for c in result.requirement_checks or ()}
    for req in result.study.requirements:
        c = checks.get(req.key)
        if req.output != output or c is None or not np.isfinite(c.half_width):
            continue
        about = np.isfinite(c.centre)
        mid = c.centre if about else float(row["mean"])
        how = "centre" if about else "mean"
        marks.append(mark("requirement", mid - c.half_width, mid + c.half_width,
                          f"requirement {requirement_label(req.key)}: {how} ± {c.half_width:.3g} "
                          f"({plain(req.text, 60)})"))
    return marks


def _axis_label(output: str) -> str:
    unit, text = describe_output(output)
    return plain(text) + (f" [{unit}]" if unit not in ("", "1") else "")


@_literal_text
def histogram_figure(result, output: str):
    """Histogram of one previewed output (a matched group's or a required one) with its band or
    requirement limits (:func:`histogram_marks`), its coverage interval and its nominal value;
    returns the matplotlib figure (:func:`histogram` renders it)."""
    y = np.asarray(result.preview[output])
    row = result.statistics.loc[output]
    fig, ax = plt.subplots(figsize=(7.0, 3.8))
    what = "Monte Carlo trials" if len(y) == result.trials else f"first {len(y)} trials"
    ax.hist(y, bins=120, density=True, color="#4a78a8", alpha=0.85, label=what)
    colours = ["#6ab04c", "#e1a33b", "#8e44ad", "#16a085", "#7f8c8d"]
    for i, m in enumerate(histogram_marks(result, output)):
        colour = colours[i % len(colours)]
        if not m.drawn:
            ax.plot([], [], ls="none", label=m.label)
        elif m.kind == "band":
            ax.axvspan(m.low, m.high, color=colour, alpha=0.15, label=m.label, gid=f"band {i}")
        else:
            ax.axvline(m.low, color=colour, ls="-.", lw=1.4, label=m.label, gid=f"limit {i} low")
            ax.axvline(m.high, color=colour, ls="-.", lw=1.4, gid=f"limit {i} high")
    p = 100 * result.coverage_probability
    for end in ("low", "high"):
        ax.axvline(row[end], color="#c0392b", ls="--", lw=1.2, gid=f"coverage {end}")
    ax.plot([], [], color="#c0392b", ls="--", label=f"{p:g} % coverage interval")
    ax.axvline(row["nominal"], color="black", lw=0.8, label="nominal (set point)", gid="nominal")
    ax.set_xlabel(_axis_label(output))
    ax.set_ylabel("probability density")
    ax.ticklabel_format(axis="x", useOffset=False)
    ax.legend(fontsize=7, loc="upper center", bbox_to_anchor=(0.5, -0.2), ncol=2, frameon=False)
    ax.set_title(plain(describe_output(output)[1], 80), fontsize=10)
    return fig


@_literal_text
def histogram(result, output: str) -> bytes:
    """PNG bytes of :func:`histogram_figure`."""
    return _png(histogram_figure(result, output))


@_literal_text
def sobol_bars(result) -> bytes:
    """Grouped bars of first-order and total Sobol indices per matched output (and per measured
    coefficient with a requirement on it)."""
    st = result.study
    shown = [b.output for b in st.bands] + [o for o in st.coefficient_outputs
                                            if st.limit_of_output(o) is not None]
    tables = {k: result.sobol[k] for k in shown if k in result.sobol}
    n = max(len(tables), 1)
    fig, axes = plt.subplots(1, n, figsize=(3.2 + 3.6 * n, 0.45 * max(len(result.inputs), 3) + 1.6),
                             squeeze=False, sharey=True)
    for i, (ax, (out, t)) in enumerate(zip(axes[0], tables.items())):
        ypos = np.arange(len(t))
        ax.barh(ypos - 0.2, t["S1"].clip(lower=0), 0.4, xerr=t["S1_conf"], label="first order S1",
                color="#4a78a8")
        ax.barh(ypos + 0.2, t["ST"].clip(lower=0), 0.4, xerr=t["ST_conf"], label="total ST",
                color="#e1a33b")
        if i == 0:
            ax.set_yticks(ypos, [plain(n) for n in t.index], fontsize=8)
            ax.invert_yaxis()
        ax.set_xlim(0, 1.05)
        ax.set_xlabel("Sobol index")
        ax.set_title(plain(out))
    axes[0][-1].legend(fontsize=8, loc="best")
    return _png(fig)


def _power_of_ten(v: float, _pos=None) -> str:
    """A tick label such as ``1e6`` (or ``2e6``).

    >>> _power_of_ten(1.0e7), _power_of_ten(2.0e6)
    ('1e7', '2e6')
    """
    mantissa, exponent = f"{v:.0e}".split("e")
    return f"{mantissa}e{int(exponent)}"


def _planned_points(ax, result, xkey: str, ykey: str) -> None:
    """The split-test plan's runs and the matrix points at (``xkey``, ``ykey``) of their
    outputs, each kind with its own marker and a legend entry; the Reynolds-sweep runs are also
    labelled on the axis (B1, B2, ...), apart from each other along the sweep."""
    tp = result.test_plan
    if tp is not None and tp.runs:
        styles = {"A": ("^", "#2c7fb8"), "C": ("v", "#d95f02")}
        sweep = [r for r in tp.runs if r.label not in styles and xkey in r.outputs
                 and ykey in r.outputs]
        for r in tp.runs:
            if r.label in styles and xkey in r.outputs and ykey in r.outputs:
                marker, colour = styles[r.label]
                ax.plot(r.outputs[xkey], r.outputs[ykey], marker=marker, ms=8, color=colour,
                        ls="none", label=f"run {plain(r.label)}: {plain(r.purpose, 70)}")
        if sweep:
            ax.plot([r.outputs[xkey] for r in sweep], [r.outputs[ykey] for r in sweep], marker="s",
                    ms=5, color="#555555", ls="none",
                    label=f"runs {plain(sweep[0].label)}-{plain(sweep[-1].label)}: Reynolds sweep")
            for r in sweep:
                ax.annotate(plain(r.label), (r.outputs[xkey], r.outputs[ykey]), fontsize=7,
                            textcoords="offset points", xytext=(6, -3), color="#555555")
    if result.matrix is not None:
        pts = [p.setpoint for p in result.matrix.points if p.ok]
        pts = [p for p in pts if xkey in p and ykey in p]
        if pts:
            ax.plot([p[xkey] for p in pts], [p[ykey] for p in pts], marker="x", ms=5,
                    color="#8e44ad", ls="none", label=f"test-matrix points ({len(pts)})")


def _log_axis(ax, plain_numbers: bool = False) -> None:
    """A log y-axis labelled ``1e6`` (or, ``plain_numbers``, ``10``, ``0.1``), without mathtext."""
    ax.set_yscale("log")
    ax.yaxis.set_major_formatter(ticker.FuncFormatter(
        (lambda v, _pos=None: f"{v:g}") if plain_numbers else _power_of_ten))
    ax.yaxis.set_minor_formatter(ticker.NullFormatter())


@_literal_text
def envelope_figure(result):
    """The facility envelope: the Reynolds number against the Mach (or Froude) number, or for a
    liquid study matching the cavitation number, the cavitation number against the speed; the
    reachable region per model size, the full-scale target, the set point, the split-test
    plan's runs and the matrix points.  Returns the matplotlib figure."""
    env = result.envelope
    cav = env.cavitation
    fig, ax = plt.subplots(figsize=(7.0, 4.2))
    colours = ["#4a78a8", "#e1a33b", "#6ab04c"]
    x = env.x if cav is None else cav.speed
    bands = env.bands if cav is None else cav.bands
    for (label, (_, lo, hi)), c in zip(bands.items(), colours):
        ax.fill_between(x, lo, hi, color=c, alpha=0.3, label=f"reachable, {label}")
        ax.plot(x, hi, color=c, lw=1.0)
    if cav is None:
        ax.plot(*env.target, marker="*", ms=14, color="#c0392b", ls="none",
                label="full scale (target)")
        setpoint, xkey, ykey = env.setpoint, f"{env.abscissa}_model", "reynolds_model"
        ax.set_xlabel("Mach number" if env.abscissa == "mach" else "Froude number")
        ax.set_ylabel("Reynolds number")
    else:
        ax.axhline(cav.target, color="#c0392b", lw=1.2, ls="--",
                   label=f"full-scale cavitation number {cav.target:.4g}")
        setpoint, xkey, ykey = cav.setpoint, "speed", "cavitation_model"
        ax.set_xlabel("facility speed U [m/s]")
        ax.set_ylabel("cavitation number (p - p_v) / (rho U^2 / 2)")
    _planned_points(ax, result, xkey, ykey)
    ax.plot(*setpoint, marker="o", ms=8, color="black", ls="none", label="set point",
            markerfacecolor="none", markeredgewidth=1.6, zorder=5)
    _log_axis(ax, plain_numbers=cav is not None)
    ax.set_title("Facility envelope" + ("" if cav is None else ": cavitation number"))
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(fontsize=7, loc="upper center", bbox_to_anchor=(0.5, -0.14), ncol=2,
              frameon=False)
    return fig


@_literal_text
def envelope_map(result) -> bytes:
    """PNG bytes of :func:`envelope_figure`."""
    return _png(envelope_figure(result))


@_literal_text
def tightening_bars(result) -> bytes:
    """Drop of 2u over the tolerance half-width per group when one tolerance is halved."""
    t = result.tightening
    bands = result.study.bands
    fig, ax = plt.subplots(figsize=(7.5, 0.42 * max(len(t), 3) + 1.4))
    ypos = np.arange(len(t))
    width = 0.8 / max(len(bands), 1)
    for k, band in enumerate(bands):
        gain = -t[f"delta_U_k2_{band.output}"].to_numpy(dtype=float) / band.tolerance
        ax.barh(ypos + (k - (len(bands) - 1) / 2) * width, gain, width, label=plain(band.group))
    labels = [plain(n) if c else f"{plain(n)} (condition)" for n, c in zip(t.index, t["controllable"])]
    ax.set_yticks(ypos, labels, fontsize=8)
    ax.invert_yaxis()
    ax.set_xlabel("drop of 2u when the tolerance is halved / band half-width")
    ax.set_title("What halving one tolerance buys")
    ax.grid(True, axis="x", alpha=0.3)
    ax.legend(fontsize=8, loc="best")
    return _png(fig)


def sweep_requirements(result, sw) -> list[tuple[str, str, np.ndarray]]:
    """The requirements a sweep judged, in the study's order: (``requirement N``, the statement,
    met at each sweep point), read from the sweep table's ``met_<key>`` columns."""
    out = []
    for req in result.study.requirements:
        col = f"met_{req.key}"
        if col in sw.table:
            out.append(("requirement " + requirement_label(req.key), plain(req.text, 60),
                        sw.table[col].to_numpy(dtype=bool)))
    return out


@_literal_text
def sweep_figure(result, sw):
    """1-D: U/tolerance and conformity against the scale, and below it where each requirement
    is met; 2-D: contours over the two scales with each requirement's not-met region hatched.
    Returns the matplotlib figure."""
    bands = result.study.bands
    tab = sw.table
    log = sw.spacing == "log"
    names = [plain(n) for n in sw.inputs]
    reqs = sweep_requirements(result, sw)
    if len(sw.inputs) == 1:
        s = tab[f"scale: {sw.inputs[0]}"].to_numpy(dtype=float)
        rows = len(reqs)
        fig, axes = plt.subplots(2 if rows else 1, 1, sharex=True, squeeze=False, figsize=(
            7.0, 4.6 + (0.9 + 0.32 * rows if rows else 0.0)), layout="constrained",
            height_ratios=[4.6, 0.6 + 0.32 * rows] if rows else None)
        ax = axes[0][0]
        for band in bands:
            ax.plot(s, tab[f"U_k2_{band.output}"] / band.tolerance, marker="o", ms=3,
                    label=f"2u of {plain(band.output)} / tolerance")
        ax.axvline(1.0, color="grey", lw=0.8, ls=":")
        ax.set_ylabel("2u / band half-width")
        ax.grid(True, alpha=0.3)
        ax2 = ax.twinx()
        ax2.plot(s, tab["conformity_all"], color="black", lw=1.5, label="P(all groups in band)")
        ax2.set_ylabel("conformity probability")
        if log:
            ax.set_xscale("log")
        ax.set_title(f"Tolerance sweep: {names[0]}")
        h1, l1 = ax.get_legend_handles_labels()
        h2, l2 = ax2.get_legend_handles_labels()
        handles, labels = h1 + h2, l1 + l2
        if rows:
            lane = axes[1][0]
            lane.set_gid("requirements")
            for i, (label, text, met) in enumerate(reqs):
                lane.plot(s[met], np.full(int(met.sum()), i), "o", ms=5, color="#2e7d32",
                          gid=f"{label} met")
                lane.plot(s[~met], np.full(int((~met).sum()), i), "x", ms=6, color="#c0392b",
                          gid=f"{label} not met")
                handles.append(plt.Line2D([], [], ls="none"))
                labels.append(f"{label}: {text}")
            lane.set_yticks(range(rows), [label for label, _, _ in reqs], fontsize=7)
            lane.set_ylim(rows - 0.5, -0.5)
            lane.axvline(1.0, color="grey", lw=0.8, ls=":")
            lane.grid(True, axis="x", alpha=0.3)
            lane.set_title("requirements at each point: met (dot) or not met (cross)", fontsize=8)
        fig.legend(handles, labels, fontsize=7, loc="outside lower center", ncol=1,
                   frameon=False)
        axes[-1][0].set_xlabel(f"tolerance scale of {names[0]}")
        return fig
    a, b = sw.scales
    shape = (len(a), len(b))
    panels = [("conformity_all", 1.0, "P(all groups in band)")] + [
        (f"U_k2_{band.output}", band.tolerance, f"2u of {plain(band.output)} / tolerance")
        for band in bands]
    values = [(tab[col].to_numpy(dtype=float) / div).reshape(shape) for col, div, _ in panels]
    varies = [np.nanmax(z) - np.nanmin(z) > 1e-12 * max(1.0, abs(np.nanmax(z))) for z in values]
    shown = [i for i, v in enumerate(varies) if v] or [0]
    constant = [f"{panels[i][2]} = {np.nanmax(values[i]):.4g}" for i in range(len(panels))
                if i not in shown]
    fig, axes = plt.subplots(1, len(shown), figsize=(5.6 * len(shown), 4.6), squeeze=False,
                             layout="constrained")
    hatches = ["//", "\\\\", "xx", "..", "oo"]
    colours = ["#ff5252", "#ffffff", "#ff9800", "#e040fb", "#00e5ff"]
    handles, labels = [], []
    for j, (ax, i) in enumerate(zip(axes[0], shown)):
        z, title = values[i], panels[i][2]
        if varies[i]:
            cs = ax.contourf(b, a, z, levels=12, cmap="viridis")
            lines = ax.contour(b, a, z, levels=6, colors="white", linewidths=0.6)
            ax.clabel(lines, fontsize=7, fmt="%.3g")
            bar = fig.colorbar(cs, ax=ax, shrink=0.9)
            bar.ax.tick_params(labelsize=7)
            bar.locator = ticker.MaxNLocator(6)
            bar.update_ticks()
        else:
            ax.text(0.5, 0.5, f"constant: {np.nanmax(z):.4g}", ha="center", va="center",
                    transform=ax.transAxes)
        for k, (label, text, met) in enumerate(reqs):
            grid = met.reshape(shape)
            colour, hatch = colours[k % len(colours)], hatches[k % len(hatches)]
            if grid.all() or not grid.any():
                if j == 0:
                    handles.append(plt.Line2D([], [], ls="none"))
                    labels.append(f"{label}: {'met over the whole sweep' if grid.all() else 'not met anywhere in the sweep'} ({text})")
                continue
            ax.contourf(b, a, (~grid).astype(float), levels=[0.5, 1.5], colors="none",
                        hatches=[hatch]).set_edgecolor(colour)
            ax.contour(b, a, grid.astype(float), levels=[0.5], colors=[colour], linewidths=1.4)
            if j == 0:
                handles.append(plt.Rectangle((0, 0), 1, 1, facecolor="#440154", hatch=hatch,
                                             edgecolor=colour))
                labels.append(f"{label} not met (hatched): {text}")
        ax.plot(1.0, 1.0, marker="o", color="red", ms=5)
        if log:
            ax.set_xscale("log")
            ax.set_yscale("log")
        ax.set_xlabel(f"tolerance scale of {names[1]}")
        ax.set_ylabel(f"tolerance scale of {names[0]}")
        ax.set_title(title, fontsize=9)
    handles.append(plt.Line2D([], [], marker="o", color="red", ls="none", ms=5))
    labels.append("the tolerances as written (scale 1, 1)")
    for text in constant:
        handles.append(plt.Line2D([], [], ls="none"))
        labels.append(f"constant over the sweep: {text}")
    fig.legend(handles, labels, fontsize=7, loc="outside lower center", ncol=1, frameon=False)
    return fig


@_literal_text
def sweep_plot(result, sw) -> bytes:
    """PNG bytes of :func:`sweep_figure`."""
    return _png(sweep_figure(result, sw))


@_literal_text
def pretest_chart(result) -> bytes:
    """U of CD (in counts) and CL against q per balance, where the loads exceed a capacity dotted."""
    c = result.coefficients.chart
    outs = list(next(iter(c.expanded.values())))
    fig, axes = plt.subplots(1, len(outs), figsize=(5.6 * len(outs), 4.4), squeeze=False)
    swept = {"stagnation_pressure": "p0 swept at the test Mach number", "mach": "Mach number swept "
             "at the stagnation pressure of the set point", "speed": "speed swept"}[c.axis]
    x = c.dynamic_pressure / 1e3
    colours = ["#4a78a8", "#e1a33b", "#6ab04c", "#c0392b", "#8e44ad", "#7f8c8d"]
    for ax, out in zip(axes[0], outs):
        factor = 1e4 if out == "drag_coefficient" else 1.0
        for i, (name, series) in enumerate(c.expanded.items()):
            colour = colours[i % len(colours)]
            y = series[out] * factor
            ok = np.asarray(c.carries[name], dtype=bool)
            near = ~ok  # the dotted part reaches its solid neighbours, so no gap shows
            near[1:] |= ~ok[:-1]
            near[:-1] |= ~ok[1:]
            ax.plot(x, np.where(ok, y, np.nan), color=colour, lw=1.6,
                    label=plain(name) + (" (as written)" if name == c.balance else ""))
            ax.plot(x, np.where(near, y, np.nan), color=colour, lw=1.0, ls=":")
        limit = result.study.limit_of_output(out)
        if limit:
            ax.axhline(limit * factor, color="black", lw=0.9, ls="--", label="requirement")
        ax.axvline(c.setpoint_q / 1e3, color="#555555", lw=0.8, label="set point")
        ax.set_xlabel(f"dynamic pressure q [kPa] ({swept})")
        p = f"{100 * c.probability[out]:g} %"
        ax.set_ylabel(f"U ({p}) of CD [counts]" if factor != 1.0 else f"U ({p}) of CL")
        ax.set_ylim(bottom=0.0)
        ax.grid(alpha=0.3)
    dotted = not all(bool(np.all(v)) for v in c.carries.values())
    handles, labels = axes[0][0].get_legend_handles_labels()
    if dotted:
        handles.append(plt.Line2D([], [], color="#777777", ls=":"))
        labels.append("dotted: the expected loads exceed a capacity with the load margin")
    fig.legend(handles, labels, fontsize=7, loc="lower center", ncol=2,
               bbox_to_anchor=(0.5, -0.02 - 0.035 * ((len(labels) + 1) // 2)))
    fig.tight_layout()
    return _png(fig)


@_literal_text
def extrapolation_plot(result) -> bytes:
    """The drag coefficient against the Reynolds number (log axis): each run's mean with its U,
    the mean fitted law, the extrapolated value with the interval of the true full-scale value
    about it, and the stated full-scale value."""
    e = result.extrapolation
    pe = f"{100 * e.probability:g} %"
    fig, ax = plt.subplots(figsize=(7.2, 4.4))
    r = e.runs
    ax.errorbar(r["reynolds"], r["drag_mean"] * 1e4, yerr=r["drag_U"] * 1e4, fmt="o",
                color="#4a78a8", capsize=3, label=f"planned runs: mean and U ({pe}) of the "
                                                  "reduced CD")
    for _, row in r.iterrows():
        ax.annotate(plain(row["run"]), (row["reynolds"], row["drag_mean"] * 1e4), fontsize=7,
                    xytext=(4, 4), textcoords="offset points")
    ax.plot(e.line["reynolds"], e.line["drag"] * 1e4, color="#555555", lw=1.2, ls="--",
            label=f"fitted law ({plain(e.law)}), read at full scale")
    lo, hi = e.estimate - e.high, e.estimate - e.low
    ax.errorbar([e.reynolds_full_scale], [e.estimate * 1e4],
                yerr=[[(e.estimate - lo) * 1e4], [(hi - e.estimate) * 1e4]], fmt="s",
                color="#c0392b", capsize=4,
                label=f"extrapolated CD; {pe} interval of the true value (U = "
                      f"{two_digits(e.U_counts)} counts)")
    ax.plot([e.reynolds_full_scale], [e.full_scale * 1e4], marker="*", ms=16, ls="none",
            markerfacecolor="none", markeredgecolor="#b8860b", markeredgewidth=1.2, zorder=5,
            label="full-scale CD as stated (pre-test)")
    ax.set_xscale("log")
    # plain tick labels: the default log labels are mathtext, which LITERAL_TEXT turns off
    ax.xaxis.set_major_formatter(ticker.FuncFormatter(_power_of_ten))
    ax.xaxis.set_minor_formatter(ticker.NullFormatter())
    ax.set_xlabel("Reynolds number (log scale)")
    ax.set_ylabel("drag coefficient [counts]")
    ax.set_title(f"Extrapolation of the split-test plan (ratio {e.ratio:.3g})", fontsize=10)
    ax.grid(alpha=0.3, which="both")
    ax.legend(fontsize=7, loc="best")
    fig.tight_layout()
    return _png(fig)


@_literal_text
def wall_plot(result) -> bytes:
    """Uncorrected (the tunnel's set value) and corrected (the stream the model sees) Mach
    number (or speed) and dynamic pressure at the set point, the corrected value with its U,
    and the full-scale Mach number (or speed) the corrected one matches."""
    w = result.coefficients.walls
    rows = w[w["output"].isin(["mach_model", "speed", "dynamic_pressure"])]
    o = result.setpoint.outputs
    pe = f"{100 * result.coverage_probability:g} %"
    fig, axes = plt.subplots(1, len(rows), figsize=(4.2 * len(rows), 3.8), squeeze=False)
    for ax, (_, row) in zip(axes[0], rows.iterrows()):
        scale = 1e-3 if row["output"] == "dynamic_pressure" else 1.0
        unit = {"dynamic_pressure": "kPa", "speed": "m/s"}.get(row["output"], "")
        # points, not bars: the axis does not start at zero, and a bar would exaggerate
        ax.plot([0], [row["uncorrected"] * scale], "o", ms=8, color="#8fa7c0",
                label="uncorrected (tunnel set value, empty-tunnel calibration)")
        ax.plot([1], [row["corrected"] * scale], "s", ms=8, color="#4a78a8",
                label="corrected for the walls")
        ax.annotate("", xy=(1, row["corrected"] * scale), xytext=(0, row["uncorrected"] * scale),
                    arrowprops={"arrowstyle": "->", "color": "#777777", "lw": 0.8})
        if np.isfinite(row["U"]):
            ax.errorbar([1], [row["corrected"] * scale], yerr=[row["U"] * scale], fmt="none",
                        color="black", capsize=5, label=f"U ({pe}) of the corrected value")
        target = {"mach_model": "mach_full_scale", "speed": "full_scale_speed"}.get(row["output"])
        if target is not None and result.study.kind == "gas" and target in o:
            ax.axhline(float(o[target]) * scale, color="#c0392b", lw=1.0, ls="--",
                       label="full scale")
        values = [row["uncorrected"] * scale, row["corrected"] * scale]
        span = max(abs(values[1] - values[0]), abs(row["U"] * scale) if np.isfinite(row["U"])
                   else 0.0, 1e-12)
        ax.set_ylim(min(values) - 3 * span, max(values) + 3 * span)
        ax.set_xticks([0, 1], ["uncorrected", "corrected"])
        ax.set_xlim(-0.5, 1.5)
        ax.set_title(f"{plain(row['quantity'])}" + (f" [{unit}]" if unit else ""), fontsize=9)
        ax.grid(alpha=0.3, axis="y")
    handles, labels = axes[0][0].get_legend_handles_labels()
    fig.legend(handles, labels, fontsize=7, loc="lower center", ncol=2,
               bbox_to_anchor=(0.5, -0.12))
    fig.tight_layout()
    return _png(fig)


@_literal_text
def matrix_plot(result) -> bytes:
    """U of CD (counts) and CL at every matrix point, one line per run against the run axis,
    with the requirement limits."""
    mx, st = result.matrix, result.study
    m = st.matrix
    outs = [o for o in ("drag_coefficient", "lift_coefficient") if f"U_{o}" in mx.table]
    fig, axes = plt.subplots(1, max(len(outs), 1), figsize=(5.8 * max(len(outs), 1), 4.2),
                             squeeze=False)
    axis = m.run_axis
    t = mx.table[mx.table["error"] == ""] if "error" in mx.table else mx.table
    colours = plt.get_cmap("tab10")
    column = {"angle_of_attack": "angle_of_attack [deg]",
              "stagnation_pressure": "stagnation_pressure [bar]"}
    for ax, out in zip(axes[0], outs):
        factor = 1e4 if out == "drag_coefficient" else 1.0
        others = [column.get(a, a) for a in m.axes if a != axis]
        groups = t.groupby(others, sort=False) if others else [((), t)]
        for i, (key, g) in enumerate(groups):
            x = g[column.get(axis, axis)].to_numpy()
            label = ", ".join(f"{a}={plain(f'{v:g}' if isinstance(v, float) else v)}"
                              for a, v in zip(others, key if isinstance(key, tuple) else (key,)))
            ax.plot(x, g[f"U_{out}"] * factor, marker="o", ms=3, lw=1.0,
                    color=colours(i % 10), label=label or "all points")
        limit = st.limit_of_output(out)
        if limit:
            ax.axhline(limit * factor, color="black", lw=0.9, ls="--", label="requirement")
        ax.set_xlabel({"angle_of_attack": "angle of attack [deg]", "mach": "Mach number",
                       "stagnation_pressure": "stagnation pressure [bar]"}.get(axis, axis))
        p = f"{100 * result.coverage_probability:g} %"
        ax.set_ylabel(f"U ({p}) of CD [counts]" if factor != 1.0 else f"U ({p}) of CL")
        ax.set_ylim(bottom=0.0)
        ax.grid(alpha=0.3)
    handles, labels = axes[0][0].get_legend_handles_labels()
    fig.legend(handles, labels, fontsize=7, loc="lower center", ncol=4,
               bbox_to_anchor=(0.5, -0.02 - 0.04 * ((len(labels) + 3) // 4)))
    fig.tight_layout()
    return _png(fig)


def all_figures(result) -> dict[str, bytes]:
    """File name -> PNG bytes."""
    figs = {name: histogram(result, output) for output, name in histogram_files(result).items()}
    if result.envelope is not None:
        figs["envelope_map.png"] = envelope_map(result)
    if result.inputs:
        figs["sobol_indices.png"] = sobol_bars(result)
    if result.tightening is not None and len(result.tightening):
        figs["tightening.png"] = tightening_bars(result)
    for i, sw in enumerate(result.sweeps, start=1):
        figs[f"sweep_{i}.png"] = sweep_plot(result, sw)
    if result.coefficients is not None and result.coefficients.chart is not None:
        figs["pretest_chart.png"] = pretest_chart(result)
    if result.coefficients is not None and result.coefficients.walls is not None:
        figs["wall_corrections.png"] = wall_plot(result)
    if result.extrapolation is not None:
        figs["extrapolation.png"] = extrapolation_plot(result)
    if result.matrix is not None:
        figs["matrix_uncertainty.png"] = matrix_plot(result)
    return figs
