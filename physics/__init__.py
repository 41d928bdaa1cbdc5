"""Field, probe, trap and safety physics: pure numpy/scipy/numba in SI units."""
