"""Hybrid simulation: the controller block and the one event loop that switches it on exact events."""
