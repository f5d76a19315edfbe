"""Reports: plots and the terminal summary."""
