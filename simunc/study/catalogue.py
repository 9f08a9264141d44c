"""The study vocabulary: quantities an input can perturb, similarity groups, outputs.

Names here are what a study writes (``perturbs``, ``[match.<group>]``, requirement outputs) and
what the model reads and returns; the physics lives in :mod:`simunc.physics`.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from simunc.units import DIMENSIONS


@dataclass(frozen=True)
class Target:
    """A quantity an uncertain input can perturb.

    Attributes
    ----------
    name : str
        Key used in studies (``perturbs = "..."``) and in the model's input dict.
    dimension : str
        Dimension of the input's size (see :data:`simunc.units.DIMENSIONS`).
    reading : str or None
        Nominal model output whose value a ``%``-of-reading size refers to;
        ``None`` where the size is itself a fraction.
    description : str
        One line for reports.
    modes : tuple of str
        Facility kinds (``"gas"``, ``"liquid"``) where the target applies.
    parameter : str or None
        Fluid-model parameter the deviation is added to, if any.
    """

    name: str
    dimension: str
    reading: str | None
    description: str
    modes: tuple[str, ...] = ("gas", "liquid")
    parameter: str | None = None

    @property
    def unit(self) -> str:
        """SI unit of the deviation (``"1"`` for a fraction or a plain number).

        >>> TARGETS["stagnation_temperature_control"].unit
        'K'
        """
        return DIMENSIONS[self.dimension][1] or "1"


_GAS = ("gas",)
_LIQ = ("liquid",)

TARGETS: dict[str, Target] = {t.name: t for t in (
    Target("stagnation_pressure_indication", "pressure", "stagnation_pressure",
           "stagnation-pressure transducer error (true = set - e)", _GAS),
    Target("stagnation_pressure_control", "pressure", "stagnation_pressure",
           "stagnation-pressure control deviation (true = set + e)", _GAS),
    Target("stagnation_temperature_indication", "temperature_difference", "stagnation_temperature",
           "stagnation-temperature sensor error (true = set - e)", _GAS),
    Target("stagnation_temperature_control", "temperature_difference", "stagnation_temperature",
           "stagnation-temperature control deviation (true = set + e)", _GAS),
    Target("static_pressure_indication", "pressure", "static_pressure",
           "static-pressure transducer error (gas: used for the Mach number; true = indicated - e)"),
    Target("static_pressure_control", "pressure", "static_pressure",
           "static-pressure control deviation of a liquid facility (true = set + e)", _LIQ),
    Target("mach_indication", "dimensionless", "mach_model",
           "Mach-number indication or calibration error (true = set - e)", _GAS),
    Target("mach_control", "dimensionless", "mach_model",
           "Mach-number control deviation (true = set + e)", _GAS),
    Target("speed_indication", "speed", "speed",
           "speed indication error of a liquid facility (true = set - e)", _LIQ),
    Target("speed_control", "speed", "speed",
           "speed control deviation of a liquid facility (true = set + e)", _LIQ),
    Target("temperature_indication", "temperature_difference", "static_temperature",
           "liquid temperature sensor error (true = set - e)", _LIQ),
    Target("temperature_control", "temperature_difference", "static_temperature",
           "liquid temperature deviation (true = set + e)", _LIQ),
    Target("frequency_indication", "frequency", "frequency",
           "model oscillation-frequency error (true = set - e)"),
    Target("model_reference_length", "length", "model_length",
           "model manufacturing deviation of the reference length (true = nominal + e)"),
    Target("viscosity_model", "dimensionless", None,
           "relative error of the viscosity model at the facility state (mu = mu_model (1 + e))"),
    Target("density_model", "dimensionless", None,
           "relative error of the density model at the facility state (rho = rho_model (1 + e); "
           "the speed of sound follows as (1 + e)^-1/2 at the same pressure)"),
    Target("full_scale_viscosity_model", "dimensionless", None,
           "relative error of the viscosity model at the full-scale state (mu = mu_model (1 + e)); "
           "with viscosity_model in one perturbs list, one error common to both states"),
    Target("full_scale_density_model", "dimensionless", None,
           "relative error of the density model at the full-scale state (rho = rho_model (1 + e); "
           "the speed of sound follows as (1 + e)^-1/2)"),
    Target("sutherland_constant", "temperature_difference", "sutherland",
           "Sutherland-constant deviation of the facility gas (and of full scale when it is the "
           "same gas)", _GAS, "sutherland"),
    Target("water_vapour_fraction", "dimensionless", "vapour_mole_fraction",
           "water-vapour mole fraction deviation of moist air", _GAS, "vapour_mole_fraction"),
    Target("full_scale_temperature", "temperature_difference", "full_scale_temperature",
           "full-scale static temperature deviation (offset from the stated condition)"),
    Target("full_scale_speed", "speed", "full_scale_speed", "full-scale speed deviation"),
    Target("full_scale_mach", "dimensionless", "mach_full_scale",
           "full-scale Mach-number deviation"),
    Target("full_scale_frequency", "frequency", "full_scale_frequency",
           "full-scale frequency deviation"),
    # The measuring chain of [measurement]: data-reduction errors of the coefficients.
    Target("normal_force_indication", "force", "normal_force",
           "balance normal-force error (reading = true + e)"),
    Target("axial_force_indication", "force", "axial_force",
           "balance axial-force error (reading = true + e)"),
    Target("pitching_moment_indication", "moment", "pitching_moment",
           "balance pitching-moment error (reading = true + e)"),
    Target("side_force_indication", "force", "side_force",
           "balance side-force error (reading = true + e)"),
    Target("rolling_moment_indication", "moment", "rolling_moment",
           "balance rolling-moment error (reading = true + e)"),
    Target("yawing_moment_indication", "moment", "yawing_moment",
           "balance yawing-moment error (reading = true + e)"),
    Target("axial_force_interaction", "dimensionless", None,
           "residual interaction of the normal force on the axial-force reading, a fraction of N "
           "(reading = A + e N)"),
    Target("moment_transfer_distance", "length", None,
           "error of the distance from the balance moment centre to the moment reference point "
           "(true = nominal + e; the data system transfers with the nominal distance)"),
    Target("attitude_indication", "angle", "angle_of_attack",
           "model attitude (angle-of-attack) sensor error (true = set - e)"),
    Target("flow_angularity", "angle", "angle_of_attack",
           "test-section upflow left after the flow-angularity correction (true angle of attack "
           "= geometric + e)"),
    Target("reference_area", "area", "reference_area",
           "model reference-area manufacturing deviation (true = nominal + e)"),
    Target("solid_blockage_correction", "dimensionless", None,
           "relative error of the solid-blockage correction (true = nominal (1 + e))"),
    Target("wake_blockage_correction", "dimensionless", None,
           "relative error of the wake-blockage correction (true = nominal (1 + e))"),
    Target("lift_interference_correction", "dimensionless", None,
           "relative error of the lift-interference angle correction (true = nominal (1 + e))"),
    Target("scale_effect_model", "dimensionless", None,
           "model-form error of the friction-line scale effect, as a fraction of the spread of "
           "the compared lines (full-scale CD = predicted + e x spread)"),
    Target("pressure_scanner_indication", "pressure", "dynamic_pressure",
           "pressure-scanner error of every tap's differential pressure (reading = true + e; a % "
           "of reading is of q)"),
)}

#: Balance components: name -> (dimension of its load, unit of its load).
BALANCE_COMPONENTS: dict[str, tuple[str, str]] = {
    "normal_force": ("force", "N"), "axial_force": ("force", "N"),
    "pitching_moment": ("moment", "N m"), "side_force": ("force", "N"),
    "rolling_moment": ("moment", "N m"), "yawing_moment": ("moment", "N m"),
}
#: Coefficients a study can state and the reduction gives: name -> (balance components it
#: needs, label).  Lift, drag and pitching moment in wind axes; the lateral ones in body axes.
COEFFICIENTS: dict[str, tuple[tuple[str, ...], str]] = {
    "lift": (("normal_force", "axial_force"), "lift coefficient CL"),
    "drag": (("normal_force", "axial_force"), "drag coefficient CD"),
    "pitching_moment": (("normal_force", "axial_force", "pitching_moment"),
                        "pitching-moment coefficient Cm (about the moment reference point)"),
    "side_force": (("side_force",), "side-force coefficient CY (body axes)"),
    "rolling_moment": (("rolling_moment",), "rolling-moment coefficient Cl (body axes)"),
    "yawing_moment": (("yawing_moment",), "yawing-moment coefficient Cn (body axes)"),
}
#: Targets that only the [measurement] section gives a meaning.
MEASUREMENT_TARGETS = frozenset(
    [f"{c}_indication" for c in BALANCE_COMPONENTS] + [
        "axial_force_interaction", "moment_transfer_distance", "attitude_indication",
        "flow_angularity", "reference_area", "pressure_scanner_indication",
        "solid_blockage_correction", "wake_blockage_correction", "lift_interference_correction",
        "scale_effect_model"])

#: Targets that are the full-scale condition itself (not a test error): reported apart.
CONDITION_TARGETS = frozenset(t.name for t in TARGETS.values() if t.name.startswith("full_scale_")
                              and not t.name.endswith("_model"))

#: Similarity groups the model computes: name -> (label, "ratio" or "difference").
GROUPS: dict[str, tuple[str, str]] = {
    "reynolds": ("Reynolds number rho U L / mu", "ratio"),
    "mach": ("Mach number U / a", "difference"),
    "froude": ("Froude number U / sqrt(g L)", "ratio"),
    "strouhal": ("Strouhal number f L / U", "ratio"),
    "weber": ("Weber number rho U^2 L / sigma", "ratio"),
    "prandtl": ("Prandtl number mu cp / k", "ratio"),
    "isentropic_exponent": ("ratio of specific heats (isentropic exponent)", "ratio"),
    "euler": ("Euler number p / (rho U^2)", "ratio"),
    "cavitation": ("cavitation number (p - p_v) / (rho U^2 / 2)", "ratio"),
}

#: Quantities a user-defined group may use, with their SI units.
QUANTITIES: dict[str, str] = {
    "density": "kg/m^3", "speed": "m/s", "length": "m", "viscosity": "Pa*s",
    "kinematic_viscosity": "m^2/s", "static_pressure": "Pa", "static_temperature": "K",
    "speed_of_sound": "m/s", "dynamic_pressure": "Pa", "gravity": "m/s^2", "frequency": "Hz",
}


@dataclass(frozen=True)
class CustomGroup:
    """A user-defined group: the product of named :data:`QUANTITIES` to given powers."""

    name: str
    powers: Mapping[str, float]

    def evaluate(self, q: Mapping[str, np.ndarray]) -> np.ndarray:
        out: float | np.ndarray = 1.0
        for k, e in self.powers.items():
            out = out * np.asarray(q[k], dtype=float) ** e
        return np.asarray(out, dtype=float)


def output_key(group: str) -> str:
    """The output compared with a group's tolerance band (ratio or difference)."""
    kind = GROUPS[group][1] if group in GROUPS else "ratio"
    return f"{group}_difference" if kind == "difference" else f"{group}_ratio"


#: Output keys with their SI units and a label for reports (groups add their own three).
OUTPUTS: dict[str, tuple[str, str]] = {
    "dynamic_pressure": ("Pa", "facility dynamic pressure q"),
    "mach_indicated": ("1", "Mach number the data system records (from the indications)"),
    "reynolds_indicated": ("1", "Reynolds number the data system records (indicated state, "
                                "nominal model length and fluid model)"),
    "dynamic_pressure_indicated": ("Pa", "dynamic pressure the data system records"),
    "dynamic_pressure_error": ("1", "relative error of the recorded q: q_indicated / q - 1 (the "
                                    "error data reduction inherits)"),
    "speed": ("m/s", "facility speed U"),
    "density": ("kg/m^3", "facility density rho"),
    "viscosity": ("Pa s", "facility viscosity mu"),
    "static_pressure": ("Pa", "facility static pressure p"),
    "static_temperature": ("K", "facility static temperature T"),
    "stagnation_pressure": ("Pa", "true stagnation pressure p0"),
    "stagnation_temperature": ("K", "true stagnation temperature T0"),
    "model_length": ("m", "true model reference length"),
    "frequency": ("Hz", "model frequency"),
    "full_scale_temperature": ("K", "full-scale static temperature"),
    "full_scale_speed": ("m/s", "full-scale speed"),
    "full_scale_frequency": ("Hz", "full-scale frequency"),
    "sutherland": ("K", "Sutherland constant used"),
    "vapour_mole_fraction": ("1", "water-vapour mole fraction"),
    "angle_of_attack": ("rad", "true angle of attack (geometric + upflow)"),
    "angle_of_attack_error": ("rad", "angle of attack the data system uses - true"),
    "reference_area": ("m^2", "true model reference area"),
    "blockage": ("1", "total blockage of the walls epsilon (true): U_corrected = U (1 + epsilon)"),
    "solid_blockage": ("1", "solid blockage of the walls (nominal, incompressible)"),
    "wake_blockage": ("1", "wake blockage of the walls (nominal, incompressible)"),
    "mach_uncorrected": ("1", "test-section Mach number before the wall correction"),
    "speed_uncorrected": ("m/s", "test-section speed before the wall correction"),
    "angle_correction": ("rad", "lift-interference angle correction of the walls (true)"),
}


def measurement_outputs(components: Sequence[str], coefficients: Sequence[str],
                        taps: Sequence[str], walls: str = "", upwash: bool = False,
                        scaled: Sequence[str] = ()) -> tuple[str, ...]:
    """Output keys of the data reduction: the attitude and area, the balance loads, each reduced
    coefficient and each tap's pressure coefficient, and with wall corrections (``walls``: the
    facility kind) the blockages, the uncorrected Mach number or speed and (``upwash``) the angle
    correction, and for each coefficient of ``scaled`` (a scale effect) its difference to the
    full-scale value.  (A coefficient's error is the reduced value
    less the stated one, a constant: its statistics are the coefficient's, shifted; the
    coefficient table gives its bias.)

    >>> measurement_outputs(["normal_force"], ["lift"], ["u30"])[-2:]
    ('lift_coefficient', 'pressure_coefficient_u30')
    """
    out = ["angle_of_attack", "angle_of_attack_error", "reference_area"] + list(components) \
        + [f"{c}_coefficient" for c in coefficients] + [f"pressure_coefficient_{t}" for t in taps]
    if walls:  # "gas" or "liquid": the facility kind of a study with wall corrections
        out += ["blockage", "solid_blockage", "wake_blockage",
                "mach_uncorrected" if walls == "gas" else "speed_uncorrected"]
    if upwash:
        out.append("angle_correction")
    out += [f"{c}_coefficient_to_full_scale" for c in scaled]
    return tuple(out)


#: The output of the split-test plan's extrapolation (:mod:`simunc.decisions.extrapolation`)
#: that a requirement may limit: the extrapolated full-scale drag less the true one.  It is no
#: output of the model (the extrapolation forms it from the planned runs).
EXTRAPOLATED_OUTPUT = "drag_coefficient_extrapolated"


def describe_output(key: str) -> tuple[str, str]:
    """SI unit and report label of an output key (flow quantities and group outputs).

    >>> describe_output("reynolds_ratio")
    ('1', 'Reynolds number rho U L / mu: model / full scale')
    """
    if key in OUTPUTS:
        return OUTPUTS[key]
    if key in BALANCE_COMPONENTS:
        return BALANCE_COMPONENTS[key][1].replace(" ", "*"), \
            f"{key.replace('_', ' ')} on the balance (true load)"
    for name, (_, label) in COEFFICIENTS.items():
        if key == f"{name}_coefficient":
            return "1", f"{label}, as the data system reduces it"
        if key == f"{name}_coefficient_to_full_scale":
            return "1", f"{label}: reduced in the tunnel - full-scale value (scale effect)"
        if key == f"{name}_coefficient_extrapolated":
            return "1", (f"{label}: extrapolated from the split-test plan's runs - full-scale "
                         "value")
    if key.startswith("pressure_coefficient_"):
        tap = key[len("pressure_coefficient_"):]
        return "1", f"pressure coefficient Cp at tap {tap}, as the data system reduces it"
    for suffix, text in (("_ratio", "model / full scale"), ("_difference", "model - full scale"),
                         ("_full_scale", "full scale"), ("_model", "model")):
        if key.endswith(suffix):
            name = key[: -len(suffix)]
            label = GROUPS[name][0] if name in GROUPS else f"user group {name}"
            return "1", f"{label}: {text}"
    return "", key


def formed_groups(facility_fluid: object, full_scale_fluid: object, frequency: bool) -> tuple[str, ...]:
    """The built-in groups the model forms for a pair of fluids, in :data:`GROUPS` order.

    Reynolds, Mach, Froude and Euler always; Strouhal with a model and a full-scale
    frequency; Prandtl when both fluids have a heat capacity and a conductivity; the
    isentropic exponent for two gases; the cavitation and Weber numbers for two liquids.
    The model (:class:`simunc.similitude.model.SimilitudeModel`) forms exactly these.
    """
    kinds = {getattr(facility_fluid, "kind", None), getattr(full_scale_fluid, "kind", None)}
    conducts = all(hasattr(f, "specific_heat_cp") and hasattr(f, "thermal_conductivity")
                   for f in (facility_fluid, full_scale_fluid))
    present = {"reynolds", "mach", "froude", "euler"}
    if frequency:
        present.add("strouhal")
    if conducts:
        present.add("prandtl")
    if kinds == {"gas"}:
        present.add("isentropic_exponent")
    if kinds == {"liquid"}:
        present |= {"cavitation", "weber"}
    return tuple(g for g in GROUPS if g in present)


def formed_outputs(facility_fluid: object, full_scale_fluid: object, *, model_frequency: bool,
                   full_scale_frequency: bool, custom: Sequence[str] = (),
                   measured: Sequence[str] = ()) -> tuple[str, ...]:
    """Every output key the model returns for a study: the flow quantities of :data:`OUTPUTS`
    (frequencies where given, the facility fluid's parameters), then per formed group
    ``<group>_model``, ``<group>_full_scale`` and :func:`output_key`, then the user groups,
    then ``measured`` (:func:`measurement_outputs` of a study with a measurement section)."""
    params = tuple(getattr(facility_fluid, "parameters", ()))
    every_parameter = {t.parameter for t in TARGETS.values() if t.parameter}
    every_parameter |= set(measurement_outputs((), (), (), "gas", True)) | {"speed_uncorrected"}
    flow = [k for k in OUTPUTS if k not in every_parameter
            and (k != "frequency" or model_frequency)
            and (k != "full_scale_frequency" or full_scale_frequency)] + list(params)
    groups = formed_groups(facility_fluid, full_scale_fluid,
                           model_frequency and full_scale_frequency)
    out = flow + [f"{g}_{s}" for g in groups for s in ("model", "full_scale")] + \
        [output_key(g) for g in groups]
    for name in custom:
        out += [f"{name}_model", f"{name}_full_scale", f"{name}_ratio"]
    return tuple(out) + tuple(measured)

