"""The property-model interface every working fluid implements.

A fluid is an object with vectorized methods of static pressure ``p`` [Pa]
and temperature ``t`` [K] (numpy arrays or floats, broadcast together).
Gases also give the isentropic static state at a Mach number from the
stagnation state; liquids give the vapour pressure and the surface tension.
Each fluid states the relative standard uncertainty of its property model,
which a study may use as an uncertain input (``viscosity_model``,
``density_model``).
"""

from __future__ import annotations

from typing import Mapping, Protocol, runtime_checkable

import numpy as np


@runtime_checkable
class Fluid(Protocol):
    """Vectorized property model of a working fluid (SI units throughout).

    Attributes
    ----------
    name : str
        Key used in studies (``facility.gas`` / ``facility.fluid``).
    kind : str
        ``"gas"`` or ``"liquid"``.
    description : str
        One line for reports: model and references.
    stated_uncertainty : Mapping[str, float]
        Relative standard uncertainty of the property model, by property
        (``"density"``, ``"viscosity"``, ``"speed_of_sound"``), with its
        source in ``description``.
    parameters : tuple of str
        Names of model parameters an uncertain input may perturb (passed to
        the methods as keyword arrays), e.g. ``("sutherland",)``.
    """

    # Read-only members (properties), so that frozen dataclasses implement the protocol.
    @property
    def name(self) -> str: ...

    @property
    def kind(self) -> str: ...

    @property
    def description(self) -> str: ...

    @property
    def stated_uncertainty(self) -> Mapping[str, float]: ...

    @property
    def parameters(self) -> tuple[str, ...]: ...

    def density(self, p, t, **params) -> np.ndarray:
        """Density [kg m^-3]."""

    def viscosity(self, p, t, **params) -> np.ndarray:
        """Dynamic viscosity [Pa s]."""

    def speed_of_sound(self, p, t, **params) -> np.ndarray:
        """Speed of sound [m s^-1]."""

    def check_state(self, p, t) -> str | None:
        """``None`` when every state lies inside the model's validity, else a reason."""


class GasModel(Fluid, Protocol):
    """A gas: adds the isentropic relations between stagnation and static state."""

    def isentropic_exponent(self, p, t, **params) -> np.ndarray:
        """Isentropic exponent ``kappa = rho a^2 / p`` [-] (gamma for a perfect gas)."""

    def static_state(self, p0, t0, mach, **params) -> tuple[np.ndarray, np.ndarray]:
        """Static pressure [Pa] and temperature [K] at a Mach number, isentropic from (p0, t0)."""

    def mach_from_pressures(self, p0, t0, p, **params) -> np.ndarray:
        """Mach number of an isentropic expansion from (p0, t0) to static pressure p."""


class LiquidModel(Fluid, Protocol):
    """A liquid: adds vapour pressure and surface tension (cavitation and Weber numbers)."""

    def vapour_pressure(self, t) -> np.ndarray:
        """Saturation vapour pressure [Pa]."""

    def surface_tension(self, t) -> np.ndarray:
        """Surface tension against air [N m^-1]."""
