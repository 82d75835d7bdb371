"""Small HDF5 helpers shared by the writers and readers."""
from __future__ import annotations

import json

import numpy as np

LONG_TEXT = 4096        # longer strings go to a dataset (attributes are size-limited)


def _plain(v):
    if isinstance(v, np.generic):
        return v.item()
    if isinstance(v, bytes):
        return v.decode("utf-8")
    return v


def write_record(group, record: dict) -> None:
    """Store a flat dict of plain values in ``group``.

    Numbers, booleans and short strings become attributes; long strings become
    scalar string datasets; None values are listed in the attribute
    ``none_keys`` and other values (lists, dicts) are JSON text listed in
    ``json_keys``.  :func:`read_record` is the exact inverse.
    """
    none_keys, json_keys = [], []
    for key, val in record.items():
        key = str(key)
        if val is None:
            none_keys.append(key)
        elif isinstance(val, str) and len(val) > LONG_TEXT:
            group.create_dataset(key, data=val, dtype=_str_dtype())
        elif isinstance(val, (bool, int, float, str, np.generic)):
            group.attrs[key] = val
        else:
            group.attrs[key] = json.dumps(val, sort_keys=True)
            json_keys.append(key)
    group.attrs["none_keys"] = json.dumps(none_keys)
    group.attrs["json_keys"] = json.dumps(json_keys)


def read_record(group) -> dict:
    """Inverse of :func:`write_record`."""
    out = {}
    json_keys = set(json.loads(group.attrs.get("json_keys", "[]")))
    for key, val in group.attrs.items():
        if key in ("none_keys", "json_keys"):
            continue
        val = _plain(val)
        out[key] = json.loads(val) if key in json_keys else val
    for key in group.keys():
        out[key] = _plain(group[key][()])
    for key in json.loads(group.attrs.get("none_keys", "[]")):
        out[key] = None
    return out


def _str_dtype():
    import h5py
    return h5py.string_dtype("utf-8")


def attr_str(obj, key: str, default=None):
    val = obj.attrs.get(key, default)
    return _plain(val)
