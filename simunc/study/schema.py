"""The study schema: frozen keyword-only dataclasses in SI, and the vocabulary of kinds.

No TOML here: :mod:`simunc.study.readers` and :mod:`simunc.study.planning` build these objects
from a study file.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any, Literal, cast

import numpy as np

from simunc.physics.dimensional import PiGroup
from simunc.physics.fluids import AIR, Fluid
from simunc.study.catalogue import CustomGroup, measurement_outputs, output_key
from simunc.uncertainty.correlation import Correlation
from simunc.units import Parsed

#: Kinds written in a study (each a closed vocabulary, checked by the readers).
FacilityKind = Literal["gas", "liquid"]
FullScaleGiven = Literal["mach", "speed"]
MachFrom = Literal["pressure_ratio", "indication"]
Distribution = Literal["normal", "rectangular", "triangular", "trapezoidal", "arcsine",
                       "truncated_normal", "lognormal"]
SizeKind = Literal["standard_uncertainty", "expanded_uncertainty", "half_width", "accuracy",
                   "resolution", "type_a"]
Component = Literal["systematic", "random"]
Sampling = Literal["random", "lhs", "sobol"]
RequirementKind = Literal["expanded_uncertainty", "within", "conformity"]
CostKind = Literal["power", "grades"]
Spacing = Literal["linear", "log"]
ShapleyMode = Literal["auto", "yes", "no"]
ScannerReference = Literal["static", "stagnation"]
SCANNER_REFERENCES: tuple[ScannerReference, ...] = ("static", "stagnation")

DISTRIBUTIONS: dict[str, Distribution] = {"normal": "normal", "gaussian": "normal", "rectangular": "rectangular",
                 "uniform": "rectangular", "triangular": "triangular",
                 "trapezoidal": "trapezoidal", "trapezoid": "trapezoidal", "arcsine": "arcsine",
                 "u_shaped": "arcsine", "truncated_normal": "truncated_normal",
                 "lognormal": "lognormal"}
#: Ways of writing the size of an input -> the distributions each accepts (the first is the
#: default when ``distribution`` is not given).
SIZE_DISTRIBUTIONS: dict[str, tuple[Distribution, ...]] = {
    "standard_uncertainty": ("normal", "rectangular", "triangular", "trapezoidal", "arcsine",
                             "lognormal", "truncated_normal"),
    "expanded_uncertainty": ("normal", "rectangular", "triangular", "trapezoidal", "arcsine"),
    "half_width": ("rectangular", "triangular", "trapezoidal", "arcsine", "truncated_normal"),
    "accuracy": ("rectangular", "triangular", "trapezoidal", "arcsine"),
    "resolution": ("rectangular",),
    "readings": ("normal",),
    "type_a": ("normal",),
}
COMPONENTS: tuple[Component, ...] = ("systematic", "random")
MACH_FROM: tuple[MachFrom, ...] = ("pressure_ratio", "indication")

#: ``match.solve_for`` names -> model keys, by facility kind.
SOLVE_NAMES = {
    "gas": {"stagnation_pressure": "stagnation_pressure",
            "stagnation_temperature": "stagnation_temperature", "mach": "mach", "speed": "mach",
            "model_scale": "model_length", "frequency": "frequency", "gas": "fluid",
            "fluid": "fluid"},
    "liquid": {"speed": "speed", "static_pressure": "static_pressure", "temperature": "temperature",
               "model_scale": "model_length", "frequency": "frequency", "fluid": "fluid"},
}
#: Default priority of a matched group (lower is matched first).
DEFAULT_PRIORITY = {"mach": 1, "froude": 1}
SAMPLING: tuple[Sampling, ...] = ("random", "lhs", "sobol")


#: Targets that are conditions or property models, not facility instruments or controls: they
#: are ranked apart and left as written by the allocation unless marked ``controllable = true``.
UNCONTROLLED_TARGETS = ("full_scale_temperature", "full_scale_speed", "full_scale_mach",
                        "full_scale_frequency", "viscosity_model", "density_model",
                        "full_scale_viscosity_model", "full_scale_density_model",
                        "sutherland_constant")
REQUIREMENT_KINDS: tuple[RequirementKind, ...] = ("expanded_uncertainty", "within", "conformity")


@dataclass(frozen=True)
class Requirement:
    """One accuracy requirement of the test plan.

    ``kind``:

    * ``expanded_uncertainty``: U_p(y) <= ``limit`` (SI, or a fraction of the
      nominal value when ``relative``), U_p the half-length of the
      probabilistically symmetric coverage interval at ``probability``;
    * ``within``: P(|y - centre| <= ``limit``) >= ``probability``;
    * ``conformity``: P(every band of ``groups`` holds) >= ``probability``.
    """

    key: str
    kind: RequirementKind
    output: str | None
    groups: tuple[str, ...]
    limit: float
    relative: bool
    probability: float
    text: str
    note: str = ""
    #: The unit the limit was written in ("mbar", "counts"; "" for a plain number or a %).
    unit: str = ""


@dataclass(frozen=True)
class CostModel:
    """Cost of an input's tolerance.

    ``kind = "power"``: cost(U) = ``at_written`` (U_written / U)^``exponent``.
    ``kind = "grades"``: a list of ``(name, spec, price, text)``: one is chosen.  ``spec`` is the
    input with the grade's size as its datasheet states it (any size form of an input, with the
    input's distribution); ``text`` the grade as written.
    """

    kind: CostKind
    at_written: float = 0.0
    exponent: float = 1.0
    grades: tuple[tuple[str, InputSpec, float, str], ...] = ()
    key: str = ""


@dataclass(frozen=True, kw_only=True)
class Written:
    """How an input's size was written, to state an allowed tolerance in the same form
    (:mod:`simunc.study.written`).

    Attributes
    ----------
    unit : str
        Unit of the size as written (``"mm"``, ``"bar"``, ``"degC"``, ``"%"``; ``""`` for a
        bare number); of the standard deviation for a Type A evaluation.
    reading_unit, full_scale_unit : str
        Accuracy: the relative units its % of reading and % of full scale were written in.
    range_text : str
        Accuracy: the full-scale range as written (``"10 bar"``, ``"-1 bar to 1 bar"``).
    absolute : float
        Accuracy: its absolute term [SI] (``fixed`` is this plus % of full scale x range).
    absolute_unit : str
        Unit of the absolute term as written.
    rtd_class : str
        Accuracy: the IEC 60751 tolerance class it was written as (``AA``, ``A``, ``B``, ``C``).
    limit_unit : str
        Truncated normal: unit of the truncation half-width.
    suffix : str
        What a size that is a fraction of something else is of (`` of the correction``).
    """

    unit: str = ""
    reading_unit: str = "%"
    full_scale_unit: str = "%"
    range_text: str = ""
    absolute: float = 0.0
    absolute_unit: str = ""
    rtd_class: str = ""
    limit_unit: str = ""
    suffix: str = ""


@dataclass(frozen=True)
class Sweep:
    """A tolerance sweep of one or two inputs (scales from ``scale[0]`` to ``scale[1]``)."""

    key: str
    inputs: tuple[str, ...]
    scale: tuple[float, float]
    points: int
    spacing: Spacing = "linear"


@dataclass(frozen=True)
class SensitivitySettings:
    second_order: bool = False
    groups: dict[str, tuple[str, ...]] = field(default_factory=dict)
    shapley: ShapleyMode = "auto"  # "auto": when inputs are correlated


@dataclass(frozen=True)
class DesignSettings:
    """Trials of the common-random-number sample and of the fresh verification run."""

    trials: int = 50_000
    verify_trials: int = 200_000
    largest_scale: float = 100.0
    #: Model evaluations (sweep points x design trials) all sweeps of a run may take together.
    max_sweep_evaluations: int = 200_000_000


@dataclass(frozen=True)
class FullScale:
    """Full-scale condition in SI."""

    static_pressure: float
    static_temperature: float
    given: FullScaleGiven
    value: float
    reference_length: float
    altitude: float | None = None
    temperature_offset: float = 0.0
    mach: float = 0.0  # nominal full-scale Mach number (= value when given is "mach")
    fluid: Fluid = AIR
    frequency: float | None = None
    frontal_area: float | None = None
    depth: float | None = None


@dataclass(frozen=True)
class Facility:
    """Facility description in SI (``None``: not given)."""

    name: str
    fluids: tuple[Fluid, ...]
    kind: FacilityKind
    stagnation_temperature: float | None = None
    stagnation_temperature_range: tuple[float, float] | None = None
    stagnation_pressure: float | None = None
    stagnation_pressure_range: tuple[float, float] | None = None
    mach: float | None = None
    mach_range: tuple[float, float] = (0.0, 1.0)
    mach_from: MachFrom = "pressure_ratio"
    speed: float | None = None
    speed_range: tuple[float, float] | None = None
    static_pressure: float | None = None
    static_pressure_range: tuple[float, float] | None = None
    temperature: float | None = None
    temperature_range: tuple[float, float] | None = None
    depth: float | None = None  # liquid: immersion depth of the model's reference point [m]
    max_model_reference_length: float | None = None
    test_section_area: float | None = None
    max_blockage: float | None = None
    max_dynamic_pressure: float | None = None

    @property
    def gas(self) -> Fluid:
        """The (first) working fluid."""
        return self.fluids[0]


@dataclass(frozen=True)
class Band:
    """Tolerance band of a matched group.

    For a ``ratio`` group the band is ``|G_model / G_full - 1| <= tolerance``;
    for the Mach number (a ``difference``) it is ``|Ma_model - Ma_full| <=
    tolerance``.  ``priority`` orders the matching (1 first); ``solve = False``
    makes the band a check only.
    """

    group: str
    tolerance: float
    text: str
    priority: int = 2
    solve: bool = True
    target: float | None = None  # solver aim, default the centre (used by test planning)

    @property
    def output(self) -> str:
        return output_key(self.group)

    @property
    def is_difference(self) -> bool:
        return self.output.endswith("_difference")

    @property
    def centre(self) -> float:
        return 0.0 if self.is_difference else 1.0

    def inside(self, y: np.ndarray) -> np.ndarray:
        """Which values of the band's output lie in the band: ``|y - centre| <= tolerance``.

        >>> Band(group="reynolds", tolerance=0.02, text="2 %").inside(np.array([1.01, 1.03]))
        array([ True, False])
        """
        return np.abs(np.asarray(y, dtype=float) - self.centre) <= self.tolerance

    def residual(self, y: float) -> float:
        """Mismatch of one value in tolerance bands, measured from the solver's aim.

        ``(y - aim) / tolerance`` for a difference, ``ln(y / aim) / tolerance`` for a ratio
        (``inf`` for a ratio at or below zero); the aim is ``target``, else the centre.

        >>> round(Band(group="reynolds", tolerance=0.02, text="2 %").residual(1.01), 4)
        0.4975
        """
        aim = self.centre if self.target is None else self.target
        if self.is_difference:
            return (y - aim) / self.tolerance
        return math.log(y / aim) / self.tolerance if y > 0.0 else math.inf


@dataclass(frozen=True)
class InputSpec:
    """One uncertain input as written (sizes parsed, not yet tied to a set point).

    :func:`simunc.similitude.inputs.build_inputs` resolves it at the solved set point: a
    size with ``relative=True`` is a fraction of each target's reading there.

    Attributes
    ----------
    name, key : str
        Label, and the study key prefix (``uncertain[i]``) for messages.
    target : str
        The first (usually the only) :data:`~simunc.study.catalogue.TARGETS` key it perturbs.
    distribution : str
        ``normal``, ``rectangular``, ``triangular``, ``trapezoidal``, ``arcsine``,
        ``truncated_normal`` or ``lognormal``; ``normal`` with a finite ``dof`` is a
        scaled and shifted t-distribution.
    size_kind : str
        How the size was written: ``standard_uncertainty``, ``expanded_uncertainty``,
        ``half_width``, ``accuracy``, ``resolution`` or ``type_a`` (also for ``readings``).
    size : Parsed
        The size: u; U; the half-width a; the %-of-reading part of an accuracy
        (its half-width is ``size + fixed``); the resolution (half-width = size / 2);
        s / sqrt(n) of a Type A evaluation (the scale of the t-distribution).
        For ``truncated_normal``: the standard deviation of the normal before truncation.
    coverage_factor : float
        k of an expanded uncertainty (computed from ``coverage_probability`` when
        that was given); 1 otherwise.
    text, note : str
        The size as written (for reports), and the note.
    targets : tuple of str
        Every target, ``target`` first.  Filled with ``(target,)`` when not given.
    component : str
        ``systematic`` (fixed over a test) or ``random`` (changes from point to point).
    dof : float
        Degrees of freedom: of the t-distribution (``n - 1`` for Type A, the stated
        value for an expanded uncertainty), ``inf`` otherwise.
    beta : float or None
        Trapezoid: ratio of the top to the bottom half-width.
    limit : Parsed or None
        Truncated normal: the half-width of the truncation.
    fixed : float
        Absolute part [SI] added to the size after the %-of-reading part is resolved
        (accuracy: full_scale x range + absolute).
    count : int or None
        Number of readings of a Type A evaluation.
    coverage_probability : float or None
        As written with an expanded uncertainty.
    correction : float
        Known correction [SI, or a fraction for a property-model error]: the mean of the
        deviation (JCGM 100 3.2.4: a known systematic effect is corrected, and the
        uncertainty of the correction remains).  It is applied to every quantity in
        ``targets`` in the nominal state, so the set point is solved with it.
    """

    name: str
    target: str
    distribution: Distribution
    size_kind: SizeKind
    size: Parsed
    coverage_factor: float
    text: str
    note: str
    key: str
    targets: tuple[str, ...] = ()
    component: Component = "systematic"
    dof: float = math.inf
    beta: float | None = None
    limit: Parsed | None = None
    fixed: float = 0.0
    count: int | None = None
    coverage_probability: float | None = None
    controllable: bool = True
    cost: CostModel | None = None
    correction: float = 0.0
    full_scale_fraction: float = 0.0  # accuracy: its % of full scale, and the range it is of [SI]
    span: float = 0.0
    #: Accuracy: fraction of the reading in degrees Celsius, |t| (a resistance thermometer's
    #: class, IEC 60751): adds celsius x |T - 273.15 K| to the half-width.
    celsius: float = 0.0
    written: Written = field(default_factory=lambda: Written())

    def __post_init__(self) -> None:
        if not self.targets:
            object.__setattr__(self, "targets", (self.target,))


@dataclass(frozen=True, kw_only=True)
class BalanceOption:
    """A balance the allocation may choose instead of the written one (a grade with a constraint).

    ``capacity``: component -> capacity [N or N m]; ``full_scale``: component -> accuracy as a
    fraction of that capacity (the %-of-full-scale term of a datasheet), for the components
    whose inputs are written as an ``accuracy`` with a ``full_scale`` term.
    """

    name: str
    price: float
    capacity: Mapping[str, float]
    full_scale: Mapping[str, float]
    key: str


@dataclass(frozen=True, kw_only=True)
class Walls:
    """Test-section boundary corrections (``[measurement.walls]``), in SI.

    Solid blockage ``shape_factor V / C^(3/2)`` (V = ``volume_per_length3 L^3`` for a model of
    reference length L, C the test-section area), or ``solid_blockage`` as given; wake blockage
    ``S / (4 C) C_D`` (S = the reference area), or ``wake_blockage`` as given; both made
    compressible with the test Mach number; lift interference ``delta (S / C) C_L`` with the
    boundary factor ``delta`` (None: no lift-interference correction).  The formulas are in
    :mod:`simunc.physics.walls`.
    """

    test_section_area: float
    volume_per_length3: float | None = None
    shape_factor: float = 0.0
    solid_blockage: float | None = None
    wake_blockage: float | None = None
    boundary_factor: float | None = None


@dataclass(frozen=True, kw_only=True)
class ScaleEffect:
    """How the coefficients depend on the Reynolds and Mach numbers (``[measurement.scale_effect]``).

    ``method = "friction_line"``: the drag's viscous part ``(1 + k) C_F(Re) S_wet / S_ref`` on the
    friction line ``line`` (:data:`simunc.physics.friction.FRICTION_LINES`), with ``compare``
    the lines whose disagreement is offered as a model-form uncertainty; ``method =
    "sensitivity"``: ``dC/dlog10 Re`` (``per_decade``) and ``dC/dM`` (``per_mach``) per
    coefficient; ``method = "table"``: ``C`` against the Reynolds numbers ``reynolds`` (and, with
    ``mach``, against the Mach numbers too: one row per Mach number) per coefficient
    (``table``), read by :func:`simunc.physics.friction.tabulated`.  With a scale effect the
    stated coefficients are the full-scale values and the tunnel's follow from the Reynolds and
    Mach numbers of each trial: a law gives the change of a coefficient between two conditions,
    its level is the stated coefficient's.  ``uncertainty`` (table and sensitivity): the
    half-width of the rectangular relative error of that change (the law's model form).
    """

    method: Literal["friction_line", "sensitivity", "table"]
    line: str = "ittc_1957"
    form_factor: float = 0.0
    wetted_ratio: float = 0.0
    compare: tuple[str, ...] = ()
    per_decade: Mapping[str, float] = field(default_factory=dict)
    per_mach: Mapping[str, float] = field(default_factory=dict)
    reynolds: tuple[float, ...] = ()
    mach: tuple[float, ...] = ()
    table: Mapping[str, tuple] = field(default_factory=dict)
    uncertainty: float = 0.0

    @property
    def coefficients(self) -> tuple[str, ...]:
        """The coefficients it moves."""
        if self.method == "friction_line":
            return ("drag",)
        if self.method == "table":
            return tuple(self.table)
        return tuple(dict.fromkeys(list(self.per_decade) + list(self.per_mach)))

    @property
    def model_form(self) -> bool:
        """Whether the law carries a model-form input (compared lines, or an uncertainty)."""
        return bool(self.compare) or self.uncertainty > 0.0


@dataclass(frozen=True, kw_only=True)
class Measurement:
    """What the test measures and how (``[measurement]``), in SI.

    Geometry scales with the model: the reference area is ``area_per_length2 L^2``, the moment
    reference length ``chord_per_length L`` and the span ``span_per_length L`` for a model of
    reference length L, so a study whose model size is solved (or a model-scale trade) keeps them
    geometrically similar.

    Attributes
    ----------
    angle_of_attack : float
        Set angle of attack [rad].
    coefficients : mapping
        Expected (pre-test) coefficients at the test point: ``lift``, ``drag``,
        ``pitching_moment`` and, with a six-component balance, ``side_force``,
        ``rolling_moment``, ``yawing_moment`` (:data:`~simunc.study.catalogue.COEFFICIENTS`).
    slopes : mapping
        ``lift`` and ``pitching_moment`` -> dC/dalpha [1/rad] where stated: the true coefficient
        is then ``C + slope (alpha_true - alpha_set)`` and the error of the reduced one is the
        error at the measured (set) angle; without a slope it is the error at the true angle.
    balance : str
        Name of the balance.
    capacity : mapping
        Balance component -> capacity [N or N m].
    load_margin : float
        Fraction by which the expected loads must stay below a capacity (0.25: loads at most
        capacity / 1.25) for a balance to be a candidate.
    transfer : float
        Distance from the balance moment centre aft to the moment reference point [m]:
        ``M_ref = M_balance + transfer N``.
    taps : tuple of (name, Cp)
        Pressure taps and their expected pressure coefficients.
    scanner_reference : {"static", "stagnation"}
        The pressure the scanner's differential readings are referenced to.
    options : tuple of BalanceOption
    """

    angle_of_attack: float
    coefficients: Mapping[str, float]
    area_per_length2: float
    chord_per_length: float
    span_per_length: float
    balance: str = ""
    capacity: Mapping[str, float] = field(default_factory=dict)
    load_margin: float = 0.0
    transfer: float = 0.0
    taps: tuple[tuple[str, float], ...] = ()
    scanner_reference: ScannerReference = "static"
    options: tuple[BalanceOption, ...] = ()
    option_price: float | None = None  # price of the written balance, with options
    slopes: Mapping[str, float] = field(default_factory=dict)
    walls: Walls | None = None
    scale_effect: ScaleEffect | None = None

    @property
    def components(self) -> tuple[str, ...]:
        return tuple(self.capacity)

    @property
    def tap_names(self) -> tuple[str, ...]:
        return tuple(name for name, _ in self.taps)

    def output_keys(self, kind: str) -> tuple[str, ...]:
        """Every output key of the data reduction for a facility of ``kind`` (``gas`` or
        ``liquid``): :func:`~simunc.study.catalogue.measurement_outputs`."""
        return measurement_outputs(
            self.components, list(self.coefficients), self.tap_names,
            kind if self.walls is not None else "",
            self.walls is not None and self.walls.boundary_factor is not None,
            self.scale_effect.coefficients if self.scale_effect is not None else ())

    @property
    def coefficient_outputs(self) -> tuple[str, ...]:
        """The reduced coefficients the test measures (output keys): each force and moment
        coefficient, then each tap's pressure coefficient."""
        return tuple(f"{c}_coefficient" for c in self.coefficients) + tuple(
            f"pressure_coefficient_{t}" for t in self.tap_names)


@dataclass(frozen=True)
class RunSettings:
    """Monte Carlo settings: a fixed number of trials, or adaptive (``trials = None``)."""

    trials: int | None = None
    seed: int = 1
    coverage_probability: float = 0.95
    sobol_base_samples: int = 4096
    sampling: Sampling = "random"
    significant_digits: int = 2
    max_trials: int = 10_000_000

    @property
    def adaptive(self) -> bool:
        return self.trials is None


@dataclass(frozen=True)
class DimensionalAnalysis:
    """Variables (name -> unit text) for a Buckingham Pi analysis, and repeating ones."""

    variables: dict[str, str]
    repeating: tuple[str, ...] | None
    groups: tuple[PiGroup, ...] = ()


@dataclass(frozen=True, kw_only=True)
class Study:
    """A validated study, all values in SI."""

    title: str
    description: str
    full_scale: FullScale
    facility: Facility
    model_scale: float | None
    model_reference_length: float | None
    solve_for: tuple[str, ...]        # match.solve_for as written
    unknowns: tuple[str, ...]         # model keys solved (solve_for and the implied ones)
    bands: tuple[Band, ...]
    inputs: tuple[InputSpec, ...]
    run: RunSettings
    model_frequency: float | None = None
    custom_groups: tuple[CustomGroup, ...] = ()
    dimensional_analysis: DimensionalAnalysis | None = None
    #: None, or the correlation of the inputs, in [[uncertain]] order (``[correlations]``).
    correlation: Correlation | None = field(default=None, compare=False)
    requirements: tuple[Requirement, ...] = ()
    sweeps: tuple[Sweep, ...] = ()
    sensitivity: SensitivitySettings = field(default_factory=SensitivitySettings)
    design: DesignSettings = field(default_factory=DesignSettings)
    measurement: Measurement | None = None
    #: Requirements on the split-test plan's extrapolation (output
    #: :data:`~simunc.study.catalogue.EXTRAPOLATED_OUTPUT`): met by the number and spread of
    #: the runs (:func:`simunc.decisions.extrapolation.runs_for`), not by the tolerances.
    plan_requirements: tuple[Requirement, ...] = ()
    #: A test matrix (``[matrix]``): the study is then its base point.
    matrix: Matrix | None = None
    path: str = ""
    sha256: str = ""
    #: The unit the study wrote most often per dimension (pressure, temperature, length,
    #: speed): the engineering units its report shows (:func:`simunc.units.display_units`).
    display_units: Mapping[str, str] = field(default_factory=dict)

    def band(self, group: str) -> Band | None:
        return next((b for b in self.bands if b.group == group), None)

    def inside(self, y: Mapping[str, np.ndarray], groups: Sequence[str] | None = None
               ) -> dict[str, np.ndarray]:
        """Per matched group (or the ``groups`` named), which trials lie in its band; ``all``:
        in every one of them."""
        # ``groups`` are matched groups (the readers check the names), so no band is None
        bands = self.bands if groups is None else cast(
            "tuple[Band, ...]", tuple(self.band(g) for g in groups))
        out: dict[str, np.ndarray] = {b.group: b.inside(y[b.output]) for b in bands}
        n = len(next(iter(y.values())))
        every = np.ones(n, dtype=bool)
        for v in out.values():
            every &= v
        out["all"] = every
        return out

    @property
    def kind(self) -> FacilityKind:
        return self.facility.kind

    @property
    def coefficient_outputs(self) -> tuple[str, ...]:
        """:attr:`Measurement.coefficient_outputs`, none without a measurement section."""
        return self.measurement.coefficient_outputs if self.measurement is not None else ()

    def requirement_on(self, output: str) -> Requirement | None:
        """The tightest requirement ``U_p(y) <= L`` with an absolute L on an output (None when
        there is none): what the coefficient ranking, tightening and pre-test chart measure
        against.  (A ``within`` requirement is judged about the set-point value, bias included,
        and a limit in % of the value is left to the requirement checks.)"""
        reqs = [r for r in self.requirements if r.output == output and not r.relative
                and r.kind == "expanded_uncertainty"]
        return min(reqs, key=lambda r: r.limit) if reqs else None

    def limit_of_output(self, output: str) -> float | None:
        """L of :meth:`requirement_on` (None without one)."""
        r = self.requirement_on(output)
        return None if r is None else r.limit


#: Axes a test matrix may vary (``[matrix.axes]``).
MatrixAxis = Literal["mach", "angle_of_attack", "configuration", "stagnation_pressure"]
MATRIX_AXES: tuple[str, ...] = ("mach", "angle_of_attack", "configuration", "stagnation_pressure")


def axis_values_text(items) -> str:
    """Axis values as the report writes them, angles in degrees and pressures in bar.

    >>> axis_values_text([("mach", 0.78), ("angle_of_attack", math.radians(2.0))])
    'mach=0.78, angle_of_attack=2 deg'
    """
    parts = []
    for k, v in items:
        if k == "angle_of_attack":
            parts.append(f"{k}={math.degrees(v):.4g} deg")
        elif k == "stagnation_pressure":
            parts.append(f"{k}={v / 1e5:.4g} bar")
        else:
            parts.append(f"{k}={v}" if isinstance(v, str) else f"{k}={v:.4g}")
    return ", ".join(parts)


@dataclass(frozen=True, kw_only=True)
class MatrixPoint:
    """One point of a test matrix: its axis values (SI; a configuration by its label), the
    expected coefficients there (empty: the study's own), and the run it belongs to with its
    place in that run (the points along the run axis, in order, make one run)."""

    index: int
    values: Mapping[str, Any]
    coefficients: Mapping[str, float]
    run: int
    position: int

    @property
    def label(self) -> str:
        """``mach=0.78, angle_of_attack=2 deg, ...`` (:func:`axis_values_text`)."""
        return axis_values_text(self.values.items())


@dataclass(frozen=True, kw_only=True)
class MatrixDerived:
    """A quantity formed across the points of a matrix (``[[matrix.increment]]``,
    ``[[matrix.slope]]``): the increment ``output(axis = minuend) - output(axis = subtrahend)``,
    or the least-squares slope of ``output`` against ``axis`` (SI per SI: per radian for the
    angle of attack), at every combination of the other axes; ``limit``: U it must not exceed
    (None: no requirement)."""

    key: str
    kind: Literal["increment", "slope"]
    name: str
    output: str
    axis: str
    minuend: Any = None
    subtrahend: Any = None
    limit: float | None = None


@dataclass(frozen=True, kw_only=True)
class Drift:
    """An input that drifts along the points of a run: its normal score follows a first-order
    autoregression with ``correlation`` between successive points (``[[matrix.drift]]``)."""

    input: str
    correlation: float


@dataclass(frozen=True, kw_only=True)
class Matrix:
    """A test matrix (``[matrix]``): the points, the set-point variables held at the base
    set point, the derived quantities, the drifting inputs and the trials per point."""

    axes: tuple[str, ...]
    run_axis: str
    points: tuple[MatrixPoint, ...]
    hold: tuple[str, ...] = ()
    derived: tuple[MatrixDerived, ...] = ()
    drift: tuple[Drift, ...] = ()
    trials: int = 20_000
