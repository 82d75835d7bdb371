"""``python -m wind2d`` is the ``wind2d`` command."""
import sys

from .cli import main

sys.exit(main())
