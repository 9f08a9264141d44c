"""Figures of a run, rendered in memory to PNG bytes (matplotlib, Agg backend).

Study text (input and group names) is drawn as written: folded to one line without control
characters (:func:`simunc.errors.plain`) and with matplotlib's mathtext and TeX off
(:func:`_literal_text`), so a ``$`` in a name is a dollar sign, not a formula to parse.
"""

from __future__ import annotations

import functools
import io

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import matplotlib.ticker as ticker  # noqa: E402
import numpy as np  # noqa: E402

from simunc.errors import plain  # noqa: E402
from simunc.report.text import two_digits  # noqa: E402

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


@_literal_text
def reynolds_histogram(result) -> bytes:
    """Histogram of the Reynolds-number ratio with its band and coverage interval."""
    y = np.asarray(result.preview)
    row = result.statistics.loc["reynolds_ratio"]
    band = result.study.band("reynolds")
    fig, ax = plt.subplots(figsize=(7.0, 3.8))
    what = "Monte Carlo trials" if len(y) == result.trials else f"first {len(y)} trials"
    ax.hist(y, bins=120, density=True, color="#4a78a8", alpha=0.85, label=what)
    if band is not None:
        ax.axvspan(1.0 - band.tolerance, 1.0 + band.tolerance, color="#6ab04c", alpha=0.15,
                   label=f"tolerance band ±{band.tolerance:.3g}")
    p = 100 * result.coverage_probability
    for x in (row["low"], row["high"]):
        ax.axvline(x, color="#c0392b", ls="--", lw=1.2)
    ax.plot([], [], color="#c0392b", ls="--", label=f"{p:g} % coverage interval")
    ax.axvline(1.0, color="black", lw=0.8, label="full-scale match")
    ax.set_xlabel("Re_model / Re_full_scale")
    ax.set_ylabel("probability density")
    ax.legend(fontsize=8, loc="upper right")
    ax.set_title("Achieved Reynolds-number ratio")
    return _png(fig)


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


@_literal_text
def envelope_map(result) -> bytes:
    """Reynolds number against Mach (or Froude) number: facility region, target and set point."""
    env = result.envelope
    fig, ax = plt.subplots(figsize=(7.0, 4.2))
    colours = ["#4a78a8", "#e1a33b", "#6ab04c"]
    for (label, (_, lo, hi)), c in zip(env.bands.items(), colours):
        ax.fill_between(env.x, lo, hi, color=c, alpha=0.3, label=f"reachable, {label}")
        ax.plot(env.x, hi, color=c, lw=1.0)
    ax.plot(*env.target, marker="*", ms=14, color="#c0392b", ls="none", label="full scale")
    ax.plot(*env.setpoint, marker="o", ms=8, color="black", ls="none", label="set point")
    if result.matrix is not None and env.abscissa == "mach":
        pts = [p.setpoint for p in result.matrix.points if p.ok]
        ax.plot([p["mach_model"] for p in pts], [p["reynolds_model"] for p in pts], marker="x",
                ms=5, color="#8e44ad", ls="none", label=f"matrix points ({len(pts)})")
    if result.test_plan is not None:
        for r in result.test_plan.runs:
            x = r.outputs[f"{env.abscissa}_model"]
            ax.plot(x, r.outputs["reynolds_model"], marker="s", ms=4, color="#555555", ls="none")
            if not r.label.startswith("B"):  # the sweep points are left unlabelled
                ax.annotate(r.label, (x, r.outputs["reynolds_model"]), textcoords="offset points",
                            xytext=(5, 3), fontsize=8)
    ax.set_yscale("log")
    ax.yaxis.set_major_formatter(ticker.FuncFormatter(_power_of_ten))
    ax.yaxis.set_minor_formatter(ticker.NullFormatter())
    ax.set_xlabel("Mach number" if env.abscissa == "mach" else "Froude number")
    ax.set_ylabel("Reynolds number")
    ax.set_title("Facility envelope")
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(fontsize=7, loc="best")
    return _png(fig)


@_literal_text
def tightening_bars(result) -> bytes:
    """Drop of U (k = 2) over the tolerance half-width per group when one tolerance is halved."""
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
    ax.set_xlabel("drop of U (k = 2) when the tolerance is halved / band half-width")
    ax.set_title("What halving one tolerance buys")
    ax.grid(True, axis="x", alpha=0.3)
    ax.legend(fontsize=8, loc="best")
    return _png(fig)


@_literal_text
def sweep_plot(result, sw) -> bytes:
    """1-D: U/tolerance and conformity against the scale; 2-D: contours over the two scales."""
    bands = result.study.bands
    tab = sw.table
    log = sw.spacing == "log"
    names = [plain(n) for n in sw.inputs]
    if len(sw.inputs) == 1:
        s = tab[f"scale: {sw.inputs[0]}"].to_numpy(dtype=float)
        fig, ax = plt.subplots(figsize=(7.0, 4.6))
        for band in bands:
            ax.plot(s, tab[f"U_k2_{band.output}"] / band.tolerance, marker="o", ms=3,
                    label=f"U (k = 2) of {plain(band.output)} / tolerance")
        ax.axvline(1.0, color="grey", lw=0.8, ls=":")
        ax.set_xlabel(f"tolerance scale of {names[0]}")
        ax.set_ylabel("U (k = 2) / band half-width")
        ax.grid(True, alpha=0.3)
        ax2 = ax.twinx()
        ax2.plot(s, tab["conformity_all"], color="black", lw=1.5, label="P(all groups in band)")
        ax2.set_ylabel("conformity probability")
        if log:
            ax.set_xscale("log")
        h1, l1 = ax.get_legend_handles_labels()
        h2, l2 = ax2.get_legend_handles_labels()
        ax.legend(h1 + h2, l1 + l2, fontsize=7, loc="upper center", bbox_to_anchor=(0.5, -0.16),
                  ncol=2, frameon=False)
        ax.set_title(f"Tolerance sweep: {names[0]}")
        return _png(fig)
    a, b = sw.scales
    shape = (len(a), len(b))
    panels = [("conformity_all", 1.0, "P(all groups in band)")] + [
        (f"U_k2_{band.output}", band.tolerance, f"U (k = 2) of {plain(band.output)} / tolerance")
        for band in bands]
    fig, axes = plt.subplots(1, len(panels), figsize=(5.4 * len(panels), 4.4), squeeze=False)
    for ax, (col, div, title) in zip(axes[0], panels):
        z = (tab[col].to_numpy(dtype=float) / div).reshape(shape)
        if np.nanmax(z) - np.nanmin(z) <= 1e-12 * max(1.0, abs(np.nanmax(z))):
            ax.text(0.5, 0.5, f"constant: {np.nanmax(z):.4g}", ha="center", va="center",
                    transform=ax.transAxes)
        else:
            cs = ax.contourf(b, a, z, levels=12, cmap="viridis")
            lines = ax.contour(b, a, z, levels=6, colors="white", linewidths=0.6)
            ax.clabel(lines, fontsize=7, fmt="%.3g")
            fig.colorbar(cs, ax=ax)
        ax.plot(1.0, 1.0, marker="o", color="red", ms=5)
        if log:
            ax.set_xscale("log")
            ax.set_yscale("log")
        ax.set_xlabel(f"tolerance scale of {names[1]}")
        ax.set_ylabel(f"tolerance scale of {names[0]}")
        ax.set_title(title, fontsize=9)
    return _png(fig)


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
    figs = {"reynolds_ratio_histogram.png": reynolds_histogram(result)}
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
