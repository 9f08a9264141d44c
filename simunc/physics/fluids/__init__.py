"""Working fluids: property models behind one vectorized interface (:mod:`.base`)."""

from simunc.physics.fluids.base import Fluid, GasModel, LiquidModel
from simunc.physics.fluids.coolprop_gas import AIR_REAL, NITROGEN, CoolPropGas
from simunc.physics.fluids.ideal_gas import AIR, IdealGas
from simunc.physics.fluids.moist_air import MOIST_AIR, MoistAir
from simunc.physics.fluids.water import FRESH_WATER, SEA_WATER, FreshWater, SeaWater

#: Fluids a study may name under ``facility.gas`` / ``facility.fluid``, by name.
FLUIDS: dict[str, Fluid] = {f.name: f for f in (AIR, AIR_REAL, NITROGEN, MOIST_AIR, FRESH_WATER,
                                                  SEA_WATER)}

__all__ = ["Fluid", "GasModel", "LiquidModel", "IdealGas", "CoolPropGas", "MoistAir", "FreshWater",
           "SeaWater", "AIR", "AIR_REAL", "NITROGEN", "MOIST_AIR", "FRESH_WATER", "SEA_WATER",
           "FLUIDS"]
