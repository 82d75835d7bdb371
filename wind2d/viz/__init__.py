"""Pictures: slice plots (and, later, movies)."""
