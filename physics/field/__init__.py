"""The combined field: closed-form kernels, dipole sets, sources and the field model."""
