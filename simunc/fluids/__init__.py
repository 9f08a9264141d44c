"""Working fluids: property models behind one vectorized interface (:mod:`.base`)."""

from .base import Fluid, GasModel, LiquidModel
from .ideal_gas import AIR, IdealGas

#: Fluids a study may name under ``facility.gas``, by name.
FLUIDS: dict[str, Fluid] = {AIR.name: AIR}

__all__ = ["Fluid", "GasModel", "LiquidModel", "IdealGas", "AIR", "FLUIDS"]
