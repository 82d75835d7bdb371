"""Pictures: slice plots (slice.py) and movies (movie.py) of snapshots."""
