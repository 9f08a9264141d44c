"""Physical constants used in more than one place (one definition each)."""

from __future__ import annotations

#: Standard acceleration of gravity [m s^-2] (CGPM 1901; ISO 80000-3).
STANDARD_GRAVITY = 9.80665
#: Standard atmospheric pressure [Pa] (ISO 2533; U.S. Standard Atmosphere 1976 sea level).
STANDARD_PRESSURE = 101_325.0
#: The Celsius zero on the kelvin scale [K] (SI Brochure, 9th ed., 2.3.1).
ZERO_CELSIUS = 273.15
