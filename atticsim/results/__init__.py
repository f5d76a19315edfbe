"""Results and metrics of a run."""
