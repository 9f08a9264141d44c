"""Generic uncertainty engines: they take a Problem and know nothing of facilities."""
