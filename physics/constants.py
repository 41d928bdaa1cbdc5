"""Physical constants in SI units."""
import math

MU0 = 4e-7 * math.pi  # vacuum permeability, T m / A (CODATA 2018 value differs by < 1e-9 relative)
