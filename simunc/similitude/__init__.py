"""The similitude model, the inputs around a set point, the set-point solver, envelope, plan."""
