"""Mesh geometry (and, under MPI, tiles)."""
