"""Decisions on the one model: design sample, requirements, sweeps, tightening, allocation."""
