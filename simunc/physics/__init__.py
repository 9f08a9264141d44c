"""Physics: formulas only, no study (atmosphere, flow, groups, fluids)."""
