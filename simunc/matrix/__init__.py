"""Test matrices: many points of one study, shared and random errors, increments and slopes,
scaled out on dask.distributed (:func:`simunc.matrix.execute.run_matrix`)."""
