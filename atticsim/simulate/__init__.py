"""Hybrid simulation: the thermal network integrated in time, switched by the controller on exact events."""
