"""Unsigned loop indices for the hot kernels.

numba wraps negative indices around (``a[-1]``), so every access with a signed
index that the compiler cannot prove non-negative gets an extra test; in the
face loops that made the kernels five times slower (measured).  Kernels
therefore convert their loop bounds with ``u(...)`` and shift indices with
``ONE`` (``i - ONE``): unsigned arithmetic stays unsigned, while mixing
``uint64`` with a plain ``int`` would give a float index, which numba rejects
at compile time (so a slip cannot pass silently).
"""
import numpy as np

ONE = np.uint64(1)
TWO = np.uint64(2)
u = np.uint64
