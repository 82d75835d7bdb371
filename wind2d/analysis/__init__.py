"""Analysis of runs: flux function and field lines, outflow rates.

Sub-modules are imported on demand (nothing heavy here).
"""
