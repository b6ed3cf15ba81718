"""Provenance records: what produced a folder of results, so it can be traced and repeated.

Every result folder written by ``thermonet run`` gets a ``provenance.json``: the library and
dependency versions, the SHA-256 of the model file and of the weather file, the weather's own
provenance note and site, the solver method and settings (``Results.info``), the time of the
run (UTC), the command line, and the list of output files with their SHA-256. The record is
plain JSON so any tool can read it.

Examples
--------
>>> from thermonet.io.provenance import provenance_record
>>> rec = provenance_record(command=["thermonet", "run", "model.json"])  # doctest: +SKIP
>>> rec["versions"]["numpy"]                                             # doctest: +SKIP
'2.4.0'
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
import math
import os
import platform
import sys
from collections.abc import Mapping, Sequence
from importlib import metadata
from pathlib import Path

import numpy as np
import pandas as pd

from thermonet.io.files import PROVENANCE_RECORD, write_file_atomic

__all__ = [
    "PROVENANCE_FILE",
    "file_sha256",
    "library_versions",
    "jsonable",
    "provenance_record",
    "write_provenance",
    "read_provenance",
]

#: Name of the provenance file in a result folder.
PROVENANCE_FILE = "provenance.json"

#: Packages whose versions are recorded (missing optional ones are recorded as None).
_PACKAGES = ("numpy", "scipy", "pandas", "pvlib", "numba", "pyarrow", "matplotlib")


def file_sha256(path, *, chunk: int = 1 << 20) -> str:
    """SHA-256 of a file's bytes, as 64 hex digits.

    Parameters
    ----------
    path : str or os.PathLike
    chunk : int, default 1 MiB
        Read size [bytes].

    Returns
    -------
    str

    Raises
    ------
    OSError
        If the file cannot be read.
    """
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(chunk), b""):
            h.update(block)
    return h.hexdigest()


def library_versions() -> dict[str, str | None]:
    """Versions of thermonet, Python and the numerical dependencies (None if not installed)."""
    from thermonet import __version__

    out: dict[str, str | None] = {"thermonet": __version__,
                                  "python": platform.python_version()}
    for name in _PACKAGES:
        try:
            out[name] = metadata.version(name)
        except metadata.PackageNotFoundError:
            out[name] = None
    return out


def jsonable(x):
    """Plain JSON data from numbers, arrays, timestamps, paths and mappings.

    NaN and ±inf become the strings ``"nan"``, ``"inf"``, ``"-inf"`` (JSON has no such
    numbers); anything else unknown becomes its ``str``.

    Parameters
    ----------
    x : object
        Any value of a provenance record.
    """
    if x is None or isinstance(x, (bool, str)):
        return x
    if isinstance(x, np.bool_):
        return bool(x)
    if isinstance(x, (int, np.integer)):
        return int(x)
    if isinstance(x, (float, np.floating)):
        v = float(x)
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return v
    if isinstance(x, Mapping):
        return {str(k): jsonable(v) for k, v in x.items()}
    if isinstance(x, (list, tuple, np.ndarray)):
        return [jsonable(v) for v in list(x)]
    if isinstance(x, (pd.Timestamp, _dt.datetime, _dt.date)):
        return x.isoformat()
    if isinstance(x, pd.Timedelta):
        return x.isoformat()
    if isinstance(x, os.PathLike):
        return os.fspath(x)
    return str(x)


def _file_entry(path) -> dict:
    p = Path(path)
    return {"path": str(p), "sha256": file_sha256(p), "bytes": p.stat().st_size}


def provenance_record(*, model=None, weather=None, weather_frame: pd.DataFrame | None = None,
                      info: Mapping | None = None, settings: Mapping | None = None,
                      command: Sequence[str] | None = None, outputs: Sequence | None = None,
                      extra: Mapping | None = None) -> dict:
    """Assemble a provenance record.

    Parameters
    ----------
    model : str or os.PathLike, optional
        Model file; its path, SHA-256 and size are recorded.
    weather : str or os.PathLike, optional
        Weather file; its path, SHA-256 and size are recorded.
    weather_frame : pandas.DataFrame, optional
        The weather as used; its ``attrs["source"]`` and ``attrs["site"]``, first and last
        label, step and number of rows are recorded.
    info : mapping, optional
        ``Results.info`` (solver method, steps, states, seconds ...).
    settings : mapping, optional
        Options the run was given (step, warm-up, method ...).
    command : sequence of str, optional
        The command line; default ``sys.argv``.
    outputs : sequence of path, optional
        Files written; each with its SHA-256 and size.
    extra : mapping, optional
        Anything else, stored under ``"extra"``.

    Returns
    -------
    dict
        Plain JSON data.
    """
    rec: dict = {
        "record": PROVENANCE_RECORD,
        "created_utc": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
        "command": list(command) if command is not None else list(sys.argv),
        "cwd": os.getcwd(),
        "versions": library_versions(),
        "platform": {"system": platform.system(), "release": platform.release(),
                     "machine": platform.machine()},
    }
    if model is not None:
        rec["model"] = _file_entry(model)
    if weather is not None or weather_frame is not None:
        w = _file_entry(weather) if weather is not None else {}
        if weather_frame is not None:
            idx = weather_frame.index
            w["source"] = weather_frame.attrs.get("source")
            w["site"] = weather_frame.attrs.get("site")
            w["rows"] = len(idx)
            w["columns"] = [str(c) for c in weather_frame.columns]
            if len(idx):
                w["first_label"] = idx[0]
                w["last_label"] = idx[-1]
            if len(idx) > 1:
                w["step"] = idx[1] - idx[0]
        rec["weather"] = w
    if info is not None:
        rec["solver"] = dict(info)
    if settings is not None:
        rec["settings"] = dict(settings)
    if outputs is not None:
        rec["outputs"] = [_file_entry(p) for p in outputs]
    if extra is not None:
        rec["extra"] = dict(extra)
    return jsonable(rec)


def write_provenance(folder, record: Mapping, *, name: str = PROVENANCE_FILE) -> Path:
    """Write a record as ``folder/provenance.json`` atomically (:func:`write_file_atomic`:
    unique temporary file, fsync, rename; permissions from the umask).

    Parameters
    ----------
    folder : str or os.PathLike
        Output folder (must exist).
    record : mapping
        The provenance record (made JSON-safe with :func:`jsonable`).
    name : str, default "provenance.json"
        File name.

    Returns
    -------
    pathlib.Path
        The file written.
    """
    folder = Path(folder)
    target = folder / name
    text = json.dumps(jsonable(record), indent=2, ensure_ascii=False, allow_nan=False) + "\n"
    return write_file_atomic(target, text)


def read_provenance(folder) -> dict:
    """Read ``folder/provenance.json`` (or the file itself if a file path is given).

    Parameters
    ----------
    folder : str or os.PathLike
        Output folder, or the provenance file itself.
    """
    p = Path(folder)
    if p.is_dir():
        p = p / PROVENANCE_FILE
    return json.loads(p.read_text(encoding="utf-8"))
