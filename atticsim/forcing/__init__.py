"""Forcing: weather, sky and sun on each roof plane, as arrays on one time base."""
