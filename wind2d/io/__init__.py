"""Output and restart: snapshots (HDF5 + XDMF), checkpoints, history, provenance.

Layouts are described in docs/output-format.md.
"""
from .checkpoint import (CheckpointError, checkpoint_name, find_latest_valid, list_checkpoints,
                         prune, read_checkpoint, restore, write_checkpoint)
from .history import History, HistoryError, read_history, read_history_units
from .provenance import provenance
from .read import Snapshot, SnapshotFormatError, read_snapshot
from .snapshot import write_snapshot, write_tile
from .xdmf import write_series, write_sidecar

__all__ = ["provenance", "write_snapshot", "write_tile", "read_snapshot", "Snapshot", "SnapshotFormatError",
           "write_sidecar", "write_series", "write_checkpoint", "read_checkpoint",
           "find_latest_valid", "list_checkpoints", "prune", "restore", "checkpoint_name",
           "CheckpointError", "History", "HistoryError", "read_history",
           "read_history_units"]
