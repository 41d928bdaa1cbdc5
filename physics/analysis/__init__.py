"""Run an analysis once and shape its results; batches with a caller's executor."""
