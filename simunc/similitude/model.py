"""The similitude model: one vectorized function from set point and deviations to outputs.

Every analysis (nominal solve, Monte Carlo, Sobol, later sweeps and
allocation) calls :meth:`SimilitudeModel.__call__` with a dict of floats or
equal-length arrays and gets a dict of arrays back.  There is no other copy of
the physics.

Measurement model
-----------------
The operator brings the *indicated* values to the set point.  Then, for a
quantity ``x`` with set point ``x_set``::

    x_true = x_set - e_indication + e_control

(an indication error ``e`` makes the instrument read ``x_true + e``; a control
deviation is the flow's own wander about the setting).  With
``mach_from = "pressure_ratio"`` the Mach number is inferred from the indicated
stagnation and static pressures, so errors of both transducers move the true
Mach number; ``mach_indication`` then stands for the test-section calibration.
With ``mach_from = "indication"`` the Mach number has an instrument of its own
and only the Mach targets move it.

Facilities
----------
A *gas* facility is set by stagnation pressure, stagnation temperature and
Mach number; the static state follows isentropically from the fluid model.  A
*liquid* facility (water tunnel, towing tank) is set by speed, static pressure
and temperature.

Data reduction
--------------
With a :class:`~simunc.study.schema.Measurement` the model also does what the
facility's data system does (:meth:`SimilitudeModel._reduction`).  The true
angle of attack is ``alpha_set - e_attitude + e_upflow``; the true loads are the
pre-test coefficients times the true q and the true geometry, resolved to the
balance's body axes at the true angle; the balance reads them with its errors;
the data system transfers the pitching moment with the nominal distance,
resolves the forces back to wind axes at the SET angle and divides by the
recorded q (the indicated state, as ``dynamic_pressure_indicated``) and the
nominal geometry.  A pressure tap reads ``p + Cp q`` against the scanner's
reference.  The reduced coefficients are outputs like the groups; their errors
are the reduced values less the pre-test ones.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping, cast

import numpy as np

from simunc.constants import STANDARD_GRAVITY
from simunc.physics import flow, friction, groups, reduction, walls
from simunc.physics.fluids import Fluid, GasModel
from simunc.study.catalogue import GROUPS, TARGETS, CustomGroup, formed_groups
from simunc.study.schema import FullScaleGiven, MachFrom, Measurement


@dataclass(frozen=True)
class SimilitudeModel:
    """Scale model in a facility against its full-scale condition.

    Parameters
    ----------
    fluid : Fluid
        Facility working fluid; its ``kind`` ("gas" or "liquid") sets the
        facility's set-point variables.
    full_scale_fluid : Fluid
        Fluid of the full-scale condition.
    mach_from : {"pressure_ratio", "indication"}
        How a gas facility's Mach number is obtained (see module docstring).
    full_scale_given : {"mach", "speed"}
        Whether ``full_scale_speed_or_mach`` is a Mach number (held when the
        temperature varies) or a speed [m/s].
    custom_groups : tuple of CustomGroup
    measurement : Measurement or None
        What the test measures: with it the model also reduces the balance and tap readings
        to coefficients (:meth:`_reduction`).
    """

    fluid: Fluid
    full_scale_fluid: Fluid
    mach_from: MachFrom = "pressure_ratio"
    full_scale_given: FullScaleGiven = "mach"
    custom_groups: tuple[CustomGroup, ...] = field(default=())
    measurement: Measurement | None = None

    @property
    def kind(self) -> str:
        return self.fluid.kind

    def _fluid_params(self, fluid: Fluid, x, d) -> dict:
        params = {}
        for name in getattr(fluid, "parameters", ()):
            if name in x:
                dev = sum((d(t.name) for t in TARGETS.values() if t.parameter == name), 0.0)
                params[name] = np.asarray(x[name], dtype=float) + dev
        return params

    @staticmethod
    def immersion_depth(x) -> np.ndarray | float:
        """Depth of the model's reference point below the free surface [m]: ``model_depth``
        plus ``geometric_depth`` (the full-scale depth) times ``L_model / L_full``."""
        geometric = x.get("geometric_depth") or 0.0
        depth = x.get("model_depth") or 0.0
        if not geometric:
            return depth
        return depth + geometric * (np.asarray(x["model_length"], dtype=float)
                                    / np.asarray(x["full_scale_length"], dtype=float))

    def _facility(self, x, d) -> dict:
        f = self.fluid
        params = self._fluid_params(f, x, d)
        if f.kind == "gas":
            f = cast(GasModel, f)  # a fluid of kind "gas" implements GasModel
            p0_set = np.asarray(x["stagnation_pressure"], dtype=float)
            t0_set = np.asarray(x["stagnation_temperature"], dtype=float)
            mach_set = np.asarray(x["mach"], dtype=float)
            p0_ind = p0_set + d("stagnation_pressure_control")
            p0 = p0_ind - d("stagnation_pressure_indication")
            t0_ind = t0_set + d("stagnation_temperature_control")
            t0 = t0_ind - d("stagnation_temperature_indication")
            mach_dev = d("mach_control") - d("mach_indication")
            if self.mach_from == "pressure_ratio":
                p_ind = f.static_state(p0_ind, t0_ind, mach_set, **params)[0]
                p_true = p_ind - d("static_pressure_indication")
                mach = f.mach_from_pressures(p0, t0, p_true, **params) + mach_dev
            else:
                mach = mach_set + mach_dev
            mach_rec = mach_set + d("mach_control")
            blocked = self._blockage(x, d, mach, mach_rec)
            if blocked is not None:  # the model sees the stream the walls speed up
                blocked["mach_uncorrected"] = mach
                mach = walls.corrected_mach(mach, blocked["blockage"])
                mach_rec = walls.corrected_mach(mach_rec, blocked["recorded"])
            p, t = f.static_state(p0, t0, mach, **params)
            a = f.speed_of_sound(p, t, **params) * _sound_factor(d("density_model"))
            speed = mach * a
            rho = f.density(p, t, **params) * (1.0 + d("density_model"))
            # What the data system records: the indicated p0 and T0 and the Mach number set from
            # the indications (its control wander seen; corrected for the walls with the nominal
            # blockage), reduced with the nominal fluid model.
            nominal = {k: np.asarray(x[k], dtype=float) for k in params}
            p_rec, t_rec = f.static_state(p0_ind, t0_ind, mach_rec, **nominal)
            speed_rec = mach_rec * f.speed_of_sound(p_rec, t_rec, **nominal)
            p0_rec = p0_ind
        else:
            speed = (np.asarray(x["speed"], dtype=float) - d("speed_indication")
                     + d("speed_control"))
            speed_rec = np.asarray(x["speed"], dtype=float) + d("speed_control")
            blocked = self._blockage(x, d, 0.0, 0.0)
            speed_u, speed_rec_u = speed, speed_rec
            if blocked is not None:  # the model sees the stream the walls speed up
                blocked["speed_uncorrected"] = speed
                speed = walls.corrected_speed(speed, blocked["blockage"])
                speed_rec = walls.corrected_speed(speed_rec, blocked["recorded"])
            depth = self.immersion_depth(x)
            p_surface = (np.asarray(x["static_pressure"], dtype=float)
                         - d("static_pressure_indication") + d("static_pressure_control"))
            t = (np.asarray(x["temperature"], dtype=float) - d("temperature_indication")
                 + d("temperature_control"))
            p = flow.hydrostatic_pressure(p_surface, f.density(p_surface, t, **params), depth,
                                          STANDARD_GRAVITY)
            if blocked is not None:  # the total head is kept: the faster stream's static falls
                p = p - (flow.kinetic_pressure(f.density(p, t, **params), speed)
                         - flow.kinetic_pressure(f.density(p, t, **params), speed_u))
            a = f.speed_of_sound(p, t, **params) * _sound_factor(d("density_model"))
            mach = speed / a
            rho = f.density(p, t, **params) * (1.0 + d("density_model"))
            p0 = p + flow.kinetic_pressure(rho, speed)
            t0 = t
            nominal = {k: np.asarray(x[k], dtype=float) for k in params}
            p_rec = np.asarray(x["static_pressure"], dtype=float) + d("static_pressure_control")
            t_rec = np.asarray(x["temperature"], dtype=float) + d("temperature_control")
            p_rec = flow.hydrostatic_pressure(p_rec, f.density(p_rec, t_rec, **nominal), depth,
                                              STANDARD_GRAVITY)
            if blocked is not None:
                rho_rec = f.density(p_rec, t_rec, **nominal)
                p_rec = p_rec - (flow.kinetic_pressure(rho_rec, speed_rec)
                                 - flow.kinetic_pressure(rho_rec, speed_rec_u))
            mach_rec = speed_rec / f.speed_of_sound(p_rec, t_rec, **nominal)
            p0_rec = p_rec + flow.kinetic_pressure(f.density(p_rec, t_rec, **nominal), speed_rec)
        mu = f.viscosity(p, t, **params) * (1.0 + d("viscosity_model"))
        recorded = {"p": p_rec, "t": t_rec, "speed": speed_rec, "mach": mach_rec, "p0": p0_rec,
                    "rho": f.density(p_rec, t_rec, **nominal),
                    "mu": f.viscosity(p_rec, t_rec, **nominal)}
        return {"fluid": f, "params": params, "p": p, "t": t, "p0": p0, "t0": t0, "rho": rho,
                "a": a, "mu": mu, "speed": speed, "mach": mach, "recorded": recorded,
                "blocked": blocked}

    def _blockage(self, x, d, mach, mach_recorded) -> dict | None:
        """Total blockage of the walls, true and as the data system applies it (None without
        wall corrections).

        ``solid_blockage`` = shape factor V / C^(3/2) (or as given), ``wake_blockage`` =
        S / (4 C) C_D (or as given), the computed ones made compressible at the uncorrected Mach
        number (:mod:`simunc.physics.walls`); the true ones carry the relative errors of their
        corrections (``solid_blockage_correction``, ``wake_blockage_correction``).
        """
        m = self.measurement
        if m is None or m.walls is None:
            return None
        w = m.walls
        length = np.asarray(x["model_length"], dtype=float)
        area = m.area_per_length2 * length ** 2
        solid = (walls.solid_blockage(w.volume_per_length3 * length ** 3, w.test_section_area,
                                      w.shape_factor)
                 if w.solid_blockage is None else w.solid_blockage)
        wake = (walls.wake_blockage(area, w.test_section_area, m.coefficients["drag"])
                if w.wake_blockage is None else w.wake_blockage)
        e_solid, e_wake = d("solid_blockage_correction"), d("wake_blockage_correction")

        def total(s, k, mach_u):
            if w.solid_blockage is not None and w.wake_blockage is not None:
                return s + k  # both as given, at the test condition
            s_c, k_c = walls.compressible_blockage(s, k, mach_u, parts=True)
            return (s if w.solid_blockage is not None else s_c) + (
                k if w.wake_blockage is not None else k_c)

        return {"blockage": total(solid * (1.0 + e_solid), wake * (1.0 + e_wake), mach),
                "recorded": total(solid, wake, mach_recorded),
                "solid_blockage": solid, "wake_blockage": wake}

    def _full_scale(self, x, d, facility_params) -> dict:
        fg = self.full_scale_fluid
        params = {k: v for k, v in facility_params.items() if fg is self.fluid}
        t = np.asarray(x["full_scale_static_temperature"], dtype=float) + d("full_scale_temperature")
        p = np.asarray(x["full_scale_static_pressure"], dtype=float)
        a = fg.speed_of_sound(p, t, **params) * _sound_factor(d("full_scale_density_model"))
        given = np.asarray(x["full_scale_speed_or_mach"], dtype=float)
        if self.full_scale_given == "mach":
            mach = given + d("full_scale_mach") + d("full_scale_speed") / a
            speed = mach * a
        else:
            speed = given + d("full_scale_speed") + d("full_scale_mach") * a
            mach = groups.mach(speed, a)
        rho = fg.density(p, t, **params) * (1.0 + d("full_scale_density_model"))
        mu = fg.viscosity(p, t, **params) * (1.0 + d("full_scale_viscosity_model"))
        return {"fluid": fg, "params": params, "p": p, "t": t, "rho": rho,
                "a": a, "mu": mu, "speed": speed, "mach": mach}

    @staticmethod
    def _groups(s: dict, length, frequency, names: tuple[str, ...]) -> dict:
        """The groups ``names`` (:func:`~simunc.study.catalogue.formed_groups`) of one state."""
        f, params = s["fluid"], s["params"]
        rho, u, mu, p, t = s["rho"], s["speed"], s["mu"], s["p"], s["t"]
        formulas = {
            "reynolds": lambda: groups.reynolds(rho, u, length, mu),
            "mach": lambda: s["mach"],
            "froude": lambda: groups.froude(u, length, STANDARD_GRAVITY),
            "strouhal": lambda: groups.strouhal(frequency, length, u),
            "weber": lambda: groups.weber(rho, u, length, f.surface_tension(t)),
            "prandtl": lambda: groups.prandtl(mu, f.specific_heat_cp(p, t, **params),
                                              f.thermal_conductivity(p, t, **params)),
            "isentropic_exponent": lambda: f.isentropic_exponent(p, t, **params),
            "euler": lambda: groups.euler(p, rho, u),
            "cavitation": lambda: groups.cavitation_number(p, f.vapour_pressure(t), rho, u),
        }
        return {name: formulas[name]() for name in names}

    def _scale_increments(self, re_model, re_full, mach_model, mach_full, re_stated,
                          mach_stated) -> tuple[dict, dict, dict]:
        """Coefficient increments over the stated full-scale condition (``re_stated``,
        ``mach_stated``: no deviation), ``C(Re, M) - C(Re_stated, M_stated)``, of the tunnel
        (``re_model``, ``mach_model``) and of the trial's full scale (``re_full``, ``mach_full``),
        per coefficient of the scale effect, and per coefficient the scale of its model-form
        input ``scale_effect_model``: for a friction line with ``compare`` the largest
        difference of a compared line's tunnel-to-full-scale drag increment from the chosen
        line's (the spread); for a table or a sensitivity with an ``uncertainty`` the law's own
        tunnel-to-full-scale increment; none without.

        Friction line: ``C_D,visc = (1 + k) C_F(Re) S_wet / S_ref`` (:mod:`simunc.physics.friction`);
        sensitivity: ``dC/dlog10 Re (log10 Re - log10 Re_stated) + dC/dM (M - M_stated)``;
        table: ``C(Re, M)`` read by :func:`simunc.physics.friction.tabulated`.
        """
        s = cast(Measurement, self.measurement).scale_effect
        if s is None:
            return {}, {}, {}
        if s.method == "friction_line":
            def increment(line, re):
                return (friction.friction_drag(line, re, s.form_factor, s.wetted_ratio)
                        - friction.friction_drag(line, re_stated, s.form_factor, s.wetted_ratio))
            tunnel, full = increment(s.line, re_model), increment(s.line, re_full)
            if not s.compare:
                return {"drag": tunnel}, {"drag": full}, {}
            spread = 0.0
            for line in s.compare:
                other = increment(line, re_model) - increment(line, re_full)
                spread = np.maximum(spread, np.abs(other - (tunnel - full)))
            return {"drag": tunnel}, {"drag": full}, {"drag": spread}
        tunnel, full = {}, {}
        for name in s.coefficients:
            if s.method == "table":
                def law(re, mach, v=s.table[name]):
                    return friction.tabulated(s.reynolds, v, re, mach=s.mach or None,
                                              at_mach=mach if s.mach else None)
            else:
                def law(re, mach, name=name):
                    return (s.per_decade.get(name, 0.0) * np.log10(re)
                            + s.per_mach.get(name, 0.0) * mach)
            anchor = law(re_stated, mach_stated)
            tunnel[name] = law(re_model, mach_model) - anchor
            full[name] = law(re_full, mach_full) - anchor
        forms = {name: tunnel[name] - full[name] for name in tunnel} if s.uncertainty else {}
        return tunnel, full, forms

    def _reduction(self, x, d, fac: dict, q, q_rec, similarity=None) -> dict:
        """The data reduction of one trial: true loads, balance and scanner readings, and the
        coefficients the data system reduces from them (see the module docstring).

        True: ``alpha = alpha_set - e_attitude + e_upflow``; wind-axis loads ``C q S`` (``C q S c``
        for the pitching moment) with the true q and the true geometry, resolved to body axes
        at the true alpha; the balance reads each component with its error (the axial force
        also ``e N``) and the pitching moment about its own centre.  Reduced: the readings
        resolved to wind axes at the measured angle (the set one) and divided by the recorded
        q and the nominal geometry.  Taps: ``p_tap = p + Cp q``, the scanner reads its
        differential to the reference (test-section static or stagnation pressure) with its
        error, the data system adds the recorded reference and subtracts the recorded static
        pressure.
        """
        m = cast(Measurement, self.measurement)
        length_nom = np.asarray(x["model_length"], dtype=float)
        scale = (length_nom + d("model_reference_length")) / length_nom
        area_nom = m.area_per_length2 * length_nom ** 2
        area = area_nom + d("reference_area")
        chord_nom, span_nom = m.chord_per_length * length_nom, m.span_per_length * length_nom
        alpha_set = m.angle_of_attack
        # The walls' upwash (lift interference), applied by the data system with its nominal
        # value: the measured angle is the set one plus that correction.
        upwash = 0.0
        if m.walls is not None and m.walls.boundary_factor is not None:
            upwash = walls.lift_interference(m.walls.boundary_factor, area_nom,
                                             m.walls.test_section_area, m.coefficients["lift"])[0]
        alpha_meas = alpha_set + upwash
        alpha = (alpha_set - d("attitude_indication") + d("flow_angularity")
                 + upwash * (1.0 + d("lift_interference_correction")))
        out = {"angle_of_attack": alpha, "angle_of_attack_error": alpha_meas - alpha,
               "reference_area": area}
        if m.walls is not None and m.walls.boundary_factor is not None:
            out["angle_correction"] = upwash * (1.0 + d("lift_interference_correction"))
        c = dict(m.coefficients)
        increments, at_full, spread = self._scale_increments(*similarity) \
            if similarity is not None else ({}, {}, {})
        for name, inc in increments.items():  # the tunnel's coefficient from full scale's
            c[name] = c[name] + inc
        for name, slope in m.slopes.items():  # the coefficient at the true angle
            c[name] = c[name] + slope * (alpha - alpha_meas)
        qs, qs_rec = q * area, q_rec * area_nom
        true: dict[str, np.ndarray] = {}
        read: dict[str, np.ndarray] = {}
        if "normal_force" in m.capacity and "axial_force" in m.capacity:
            normal, axial = reduction.wind_to_body(c["lift"] * qs, c["drag"] * qs, alpha)
            true.update(normal_force=normal, axial_force=axial)
            read["normal_force"] = normal + d("normal_force_indication")
            read["axial_force"] = (axial + d("axial_force_indication")
                                   + d("axial_force_interaction") * normal)
        if "pitching_moment" in m.capacity:
            moment_ref = c["pitching_moment"] * qs * chord_nom * scale
            n_true = true.get("normal_force", 0.0)
            transfer = m.transfer + d("moment_transfer_distance")
            true["pitching_moment"] = moment_ref - transfer * n_true
            reduced_ref = (true["pitching_moment"] + d("pitching_moment_indication")
                           + m.transfer * read.get("normal_force", 0.0))
            out["pitching_moment_coefficient"] = reduction.moment_coefficient(
                reduced_ref, q_rec, area_nom, chord_nom)
        # Lateral components in body axes about the moment reference point; the chord's
        # manufacturing deviation does not move the span.
        for name, ref in (("side_force", 1.0), ("rolling_moment", span_nom),
                          ("yawing_moment", span_nom)):
            if name in m.capacity:
                true[name] = c[name] * qs * ref
                out[f"{name}_coefficient"] = (true[name] + d(f"{name}_indication")) / (
                    qs_rec * ref)
        if "lift" in c and "drag" in c:
            lift, drag = reduction.body_to_wind(read["normal_force"], read["axial_force"],
                                                alpha_meas)
            out["lift_coefficient"] = reduction.force_coefficient(lift, q_rec, area_nom)
            out["drag_coefficient"] = reduction.force_coefficient(drag, q_rec, area_nom)
        for name in m.capacity:
            out[name] = true[name]
        for name in increments:  # taking the tunnel's value for full scale's
            full = m.coefficients[name] + at_full[name] + (
                d("scale_effect_model") * spread[name] if name in spread else 0.0)
            out[f"{name}_coefficient_to_full_scale"] = out[f"{name}_coefficient"] - full
        if m.taps:
            # Cp = (p_tap - p_ref + e + p_ref,recorded - p_recorded) / q_recorded with
            # p_tap = p + Cp q: the terms common to every tap are formed once.
            common = d("pressure_scanner_indication")
            if m.scanner_reference == "stagnation":
                common = common + (fac["p"] - fac["p0"]) + (fac["recorded"]["p0"]
                                                            - fac["recorded"]["p"])
            q_ratio, shift = q / q_rec, reduction.pressure_coefficient(common, 0.0, q_rec)
            for tap, cp in m.taps:
                out[f"pressure_coefficient_{tap}"] = cp * q_ratio + shift
        return out

    @staticmethod
    def _quantities(s: dict, length, frequency) -> dict:
        return {"density": s["rho"], "speed": s["speed"], "length": length, "viscosity": s["mu"],
                "kinematic_viscosity": s["mu"] / s["rho"], "static_pressure": s["p"],
                "static_temperature": s["t"], "speed_of_sound": s["a"],
                "dynamic_pressure": flow.kinetic_pressure(s["rho"], s["speed"]), "gravity": STANDARD_GRAVITY,
                "frequency": np.nan if frequency is None else frequency}

    def __call__(self, x: Mapping[str, object]) -> dict[str, np.ndarray]:
        """Evaluate the model.

        Parameters
        ----------
        x : mapping
            Set-point values (gas: ``stagnation_pressure``, ``stagnation_temperature``,
            ``mach``; liquid: ``speed``, ``static_pressure``, ``temperature``), the
            ``model_length``, the full-scale condition (``full_scale_static_pressure``,
            ``full_scale_static_temperature``, ``full_scale_speed_or_mach``,
            ``full_scale_length``), optionally ``frequency`` and
            ``full_scale_frequency_nominal``, fluid parameters (e.g. ``sutherland``), and
            any :data:`TARGETS` deviations (floats or arrays of one length, SI);
            absent deviations are 0.

        Returns
        -------
        dict of ndarray
            Flow quantities of :data:`OUTPUTS` and, per group, ``<group>_model``,
            ``<group>_full_scale`` and ``<group>_ratio`` (``mach_difference``
            for the Mach number), broadcast to the common shape.
        """
        def d(name: str):
            v = x.get(name)
            return 0.0 if v is None else np.asarray(v, dtype=float)

        fac = self._facility(x, d)
        fs = self._full_scale(x, d, fac["params"])
        length = np.asarray(x["model_length"], dtype=float) + d("model_reference_length")
        fs_length = np.asarray(x["full_scale_length"], dtype=float)
        freq = fs_freq = None
        if x.get("frequency") is not None:
            freq = np.asarray(x["frequency"], dtype=float) - d("frequency_indication")
        if x.get("full_scale_frequency_nominal") is not None:
            fs_freq = (np.asarray(x["full_scale_frequency_nominal"], dtype=float)
                       + d("full_scale_frequency"))

        rec = fac["recorded"]
        q = flow.kinetic_pressure(fac["rho"], fac["speed"])
        q_rec = flow.kinetic_pressure(rec["rho"], rec["speed"])
        out = {
            "dynamic_pressure": q,
            "mach_indicated": rec["mach"],
            "reynolds_indicated": groups.reynolds(rec["rho"], rec["speed"],
                                                  np.asarray(x["model_length"], dtype=float),
                                                  rec["mu"]),
            "dynamic_pressure_indicated": q_rec,
            "dynamic_pressure_error": q_rec / q - 1.0,
            "speed": fac["speed"], "density": fac["rho"], "viscosity": fac["mu"],
            "static_pressure": fac["p"], "static_temperature": fac["t"],
            "stagnation_pressure": fac["p0"], "stagnation_temperature": fac["t0"],
            "model_length": length, "full_scale_temperature": fs["t"],
            "full_scale_speed": fs["speed"],
        }
        if freq is not None:
            out["frequency"] = freq
        if fs_freq is not None:
            out["full_scale_frequency"] = fs_freq
        for name, v in fac["params"].items():
            out[name] = v
        names = formed_groups(self.fluid, self.full_scale_fluid,
                              freq is not None and fs_freq is not None)
        gm = self._groups(fac, length, freq, names)
        gf = self._groups(fs, fs_length, fs_freq, names)
        for name in names:
            out[f"{name}_model"], out[f"{name}_full_scale"] = gm[name], gf[name]
            if GROUPS[name][1] == "difference":
                out[f"{name}_difference"] = gm[name] - gf[name]
            else:
                out[f"{name}_ratio"] = gm[name] / gf[name]
        if self.measurement is not None:
            similarity = None
            if self.measurement.scale_effect is not None:
                # the full-scale condition as stated (no deviation): the anchor of the stated
                # coefficients, so that a full-scale input moves the full-scale value only
                fs0 = self._full_scale(x, lambda name: 0.0,
                                       {k: np.asarray(x[k], dtype=float) for k in fac["params"]})
                re0 = self._groups(fs0, fs_length, None, ("reynolds",))["reynolds"]
                similarity = (gm["reynolds"], gf["reynolds"], fac["mach"], fs["mach"], re0,
                              fs0["mach"])
            out.update(self._reduction(x, d, fac, q, q_rec, similarity))
        if fac["blocked"] is not None:
            out.update({k: v for k, v in fac["blocked"].items() if k != "recorded"})
        if self.custom_groups:
            qm = self._quantities(fac, length, freq)
            qf = self._quantities(fs, fs_length, fs_freq)
            for cg in self.custom_groups:
                vm, vf = cg.evaluate(qm), cg.evaluate(qf)
                out[f"{cg.name}_model"], out[f"{cg.name}_full_scale"] = vm, vf
                out[f"{cg.name}_ratio"] = vm / vf
        arrays = {k: np.asarray(v, dtype=float) for k, v in out.items()}
        shape = np.broadcast_shapes(*(v.shape for v in arrays.values()))
        return {k: np.broadcast_to(v, shape) for k, v in arrays.items()}


def _sound_factor(e):
    """Speed-of-sound factor ``(1 + e)^(-1/2)`` of a density-model error ``e`` (rho = rho_model
    (1 + e)) at the same pressure: ``a^2 = gamma p / rho`` for a gas (``K / rho`` for a liquid), so
    a gas set by p0, T0 and M keeps ``q = rho U^2 / 2 = gamma/2 p M^2`` and the Reynolds number
    moves by ``e / 2``, not ``e``.

    >>> round(float(_sound_factor(0.01)) ** 2 * 1.01, 12)
    1.0
    """
    return 1.0 if isinstance(e, float) and e == 0.0 else 1.0 / np.sqrt(1.0 + e)


#: Outputs that a physical trial has above zero.
POSITIVE_OUTPUTS = ("model_length", "static_pressure", "static_temperature", "density",
                    "viscosity", "speed")


def bad_trials(y, model, limit: int = 16) -> np.ndarray:
    """Indices of up to ``limit`` trials that :func:`trial_problems` objects to (empty when
    none): those with non-finite or non-positive values, else (the fluid model checks a whole
    array at once) one state outside the fluid model, found by bisection."""
    n = len(next(iter(y.values())))
    bad = np.zeros(n, dtype=bool)
    with np.errstate(invalid="ignore"):
        for k, v in y.items():
            v = np.asarray(v)
            bad |= ~np.isfinite(v)
            if k in POSITIVE_OUTPUTS:
                bad |= v <= 0.0
    found = np.flatnonzero(bad)
    if found.size or model is None:
        return found[:limit]
    p, t = np.asarray(y["static_pressure"]), np.asarray(y["static_temperature"])
    lo, hi = 0, n
    if not model.fluid.check_state(p, t):
        return found
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if model.fluid.check_state(p[lo:mid], t[lo:mid]):
            hi = mid
        else:
            lo = mid
    return np.array([lo])


def trial_problems(y, model) -> list[str]:
    """Why some trials are not physical states (empty when all are).

    Non-finite values, a length, pressure, temperature, density, viscosity or speed at or
    below zero, and (with ``model``) a state outside its fluid model.
    """
    n = len(next(iter(y.values())))
    bad = np.zeros(n, dtype=bool)
    for v in y.values():
        bad |= ~np.isfinite(v)
    reasons = [f"{np.count_nonzero(bad)} with non-finite values (e.g. a static pressure above "
               "the stagnation pressure)"] if bad.any() else []
    for key in POSITIVE_OUTPUTS:
        if key in y:
            neg = np.asarray(y[key]) <= 0.0
            if neg.any():
                reasons.append(f"{np.count_nonzero(neg)} with {key.replace('_', ' ')} <= 0")
    if not reasons and model is not None:
        why = model.fluid.check_state(y["static_pressure"], y["static_temperature"])
        if why:
            reasons.append(f"some outside the {model.fluid.name} model ({why})")
    return reasons
