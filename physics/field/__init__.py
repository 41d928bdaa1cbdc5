"""Field sources, kernels and the field model (see DESIGN.md, Data flow)."""
