"""The keys each table of a study accepts (the readers check them; docs/study-file.md lists them)."""

from __future__ import annotations

from simunc.study.catalogue import BALANCE_COMPONENTS, GROUPS
from simunc.study.matrix import (
    AXES_KEYS,
    DRIFT_KEYS,
    INCREMENT_KEYS,
    MATRIX_KEYS,
    POINT_KEYS,
    SLOPE_KEYS,
)
from simunc.study.measurement import (
    BALANCE_KEYS,
    MEASUREMENT_KEYS,
    OPTION_KEYS,
    SCALE_KEYS,
    TAP_KEYS,
    WALL_KEYS,
)

ROOT_KEYS = ("title", "description", "full_scale", "facility", "model", "match", "uncertain",
              "correlations", "run", "dimensional_analysis", "requirement", "sweep",
              "sensitivity", "design", "measurement", "matrix")
FULL_SCALE_KEYS = ("fluid", "altitude", "pressure_altitude", "temperature_offset",
                    "static_pressure", "static_temperature", "depth", "mach", "speed",
                    "reference_length", "frequency", "frontal_area")
FACILITY_KEYS = ("name", "gas", "fluid", "stagnation_temperature", "stagnation_temperature_range",
                  "stagnation_pressure", "stagnation_pressure_range", "mach", "mach_range",
                  "mach_from", "speed", "speed_range", "static_pressure", "static_pressure_range",
                  "temperature", "temperature_range", "max_model_reference_length",
                  "test_section_area", "max_blockage", "max_dynamic_pressure", "humidity", "depth")
HUMIDITY_KEYS = ("dew_point", "relative_humidity", "at_pressure", "at_temperature")
MODEL_KEYS = ("scale", "reference_length", "frequency", "enlarged")
BAND_KEYS = ("tolerance", "priority", "solve")
CUSTOM_KEYS = ("powers", "tolerance", "priority", "solve")
SIZE_KEYS = ("standard_uncertainty", "expanded_uncertainty", "half_width", "accuracy",
              "resolution", "readings", "type_a")
INPUT_KEYS = ("name", "perturbs", "distribution") + SIZE_KEYS + (
    "coverage_factor", "coverage_probability", "degrees_of_freedom", "beta", "component", "note",
    "controllable", "cost", "grades", "correction")
ACCURACY_KEYS = ("reading", "full_scale", "range", "absolute", "celsius", "rtd_class")
TYPE_A_KEYS = ("mean", "standard_deviation", "count")
CORRELATION_KEYS = ("pairs",)
RUN_KEYS = ("trials", "seed", "coverage_probability", "sobol_base_samples", "sampling",
             "significant_digits", "max_trials")
DIM_KEYS = ("variables", "repeating")
MATCH_KEYS = ("solve_for", "custom") + tuple(GROUPS)


GAS_ONLY = ("stagnation_temperature", "stagnation_temperature_range", "stagnation_pressure",
             "stagnation_pressure_range", "mach", "mach_range", "mach_from")
LIQUID_ONLY = ("speed", "speed_range", "static_pressure", "static_pressure_range", "temperature",
                "temperature_range", "depth")

REQUIREMENT_KEYS = ("output", "group", "expanded_uncertainty", "coverage_probability", "within",
                     "probability", "conformity", "note")
COST_KEYS = ("at_written", "exponent")
GRADE_KEYS = ("price", "name", "standard_uncertainty", "expanded_uncertainty", "half_width",
              "accuracy", "resolution", "coverage_factor", "coverage_probability",
              "degrees_of_freedom")
SWEEP_KEYS = ("inputs", "scale", "points", "spacing")
SENSITIVITY_KEYS = ("second_order", "groups", "shapley")
DESIGN_KEYS = ("trials", "verify_trials", "largest_scale", "max_sweep_evaluations")


#: Every table of a study -> the keys its reader accepts ("match.<group>": a group's band table,
#: "match.custom.<name>": a user group). docs/study-file.md documents exactly these (tested).
SECTION_KEYS: dict[str, tuple[str, ...]] = {
    "": ROOT_KEYS,
    "full_scale": FULL_SCALE_KEYS,
    "facility": FACILITY_KEYS,
    "facility.humidity": HUMIDITY_KEYS,
    "model": MODEL_KEYS,
    "match": MATCH_KEYS,
    "match.<group>": BAND_KEYS,
    "match.custom.<name>": CUSTOM_KEYS,
    "uncertain": INPUT_KEYS,
    "uncertain.accuracy": ACCURACY_KEYS,
    "uncertain.type_a": TYPE_A_KEYS,
    "uncertain.cost": COST_KEYS,
    "uncertain.grades": GRADE_KEYS,
    "uncertain.grades.accuracy": ACCURACY_KEYS,
    "correlations": CORRELATION_KEYS,
    "run": RUN_KEYS,
    "dimensional_analysis": DIM_KEYS,
    "requirement": REQUIREMENT_KEYS,
    "sweep": SWEEP_KEYS,
    "sensitivity": SENSITIVITY_KEYS,
    "design": DESIGN_KEYS,
    "measurement": MEASUREMENT_KEYS,
    "measurement.balance": BALANCE_KEYS,
    "measurement.balance_option": OPTION_KEYS,
    "measurement.balance_option.capacity": tuple(BALANCE_COMPONENTS),
    "measurement.balance_option.full_scale": tuple(BALANCE_COMPONENTS),
    "measurement.tap": TAP_KEYS,
    "measurement.walls": WALL_KEYS,
    "measurement.scale_effect": SCALE_KEYS,
    "matrix": MATRIX_KEYS,
    "matrix.axes": AXES_KEYS,
    "matrix.point": POINT_KEYS,
    "matrix.increment": INCREMENT_KEYS,
    "matrix.slope": SLOPE_KEYS,
    "matrix.drift": DRIFT_KEYS,
}
