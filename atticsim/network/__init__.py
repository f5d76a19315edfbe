"""Thermal network: nodes, capacities and the heat flows between them."""
