"""Working fluids: property models behind one vectorized interface (:mod:`.base`)."""

from .base import Fluid, GasModel, LiquidModel
from .ideal_gas import AIR, IdealGas
from .real_gas import AIR_REAL, NITROGEN, CoolPropGas

#: Fluids a study may name under ``facility.gas`` / ``facility.fluid``, by name.
FLUIDS: dict[str, Fluid] = {f.name: f for f in (AIR, AIR_REAL, NITROGEN)}

__all__ = ["Fluid", "GasModel", "LiquidModel", "IdealGas", "CoolPropGas", "AIR", "AIR_REAL",
           "NITROGEN", "FLUIDS"]
