"""Chunk files: stable names, exact CSV text, atomic publication.

A chunk is written as one CSV file ``chunks/KEY.csv`` in the output folder,
where ``KEY`` is the chunk's stable key (see :func:`chunk_key`).  The file
is first written to a temporary file in the same folder, flushed to disk and
then published with :func:`os.replace`, so a reader (or ``--resume``) sees
either no file or the complete chunk, never a part of one.

Values are written so that they read back exactly: floats as the shortest
text that round-trips (Python's ``repr``; ``nan``, ``inf``), integers as
digits, booleans as ``true``/``false``, missing values as an empty field.
"""

from __future__ import annotations

import csv
import hashlib
import io
import json
import os
import re
import tempfile
from pathlib import Path

import numpy as np

#: Folder of the chunk files inside the output folder.
CHUNK_FOLDER = "chunks"
CHUNK_SUFFIX = ".csv"


def canonical(obj) -> str:
    """Return ``obj`` (dicts, lists, numbers, strings) as canonical JSON text, for hashing."""
    return json.dumps(obj, sort_keys=True, separators=(",", ":"), default=_jsonable)


def _jsonable(value):
    if isinstance(value, np.generic):
        return value.item()
    if isinstance(value, (tuple, set, frozenset)):
        return list(value)
    if isinstance(value, Path):
        return str(value)
    raise TypeError(f"cannot hash {type(value).__name__}")


def slug(text, most: int = 24) -> str:
    """Return ``text`` reduced to lower-case letters, digits and ``.+-`` (at most ``most`` characters)."""
    s = re.sub(r"[^0-9a-z.+\-]+", "-", str(text).lower()).strip("-")
    return s[:most] or "x"


def chunk_key(label_parts, identity) -> str:
    """Return a stable, readable file stem for a chunk.

    Parameters
    ----------
    label_parts : sequence of str
        Readable parts (site, values, years); shortened into the stem.
    identity : JSON-able
        Everything that determines the chunk's rows (job, grid point, span);
        its SHA-256 (first 12 hex digits) ends the stem, so that two chunks
        differ in name whenever they differ in content, and a changed spec
        never reuses an old chunk on ``--resume``.
    """
    digest = hashlib.sha256(canonical(identity).encode("utf-8")).hexdigest()[:12]
    label = "_".join(slug(p) for p in label_parts if str(p) != "")
    return f"{label[:100]}_{digest}" if label else digest


def cell(value) -> str:
    """Return the CSV text of one value (exact for floats; see the module notes)."""
    if value is None:
        return ""
    if isinstance(value, (bool, np.bool_)):
        return "true" if value else "false"
    if isinstance(value, (int, np.integer)):
        return str(int(value))
    if isinstance(value, (float, np.floating)):
        return repr(float(value))
    return str(value)


def column_cells(values) -> list[str]:
    """Return the CSV texts of a numpy column (one conversion per column, not per event)."""
    arr = np.asarray(values)
    if arr.dtype.kind == "f":
        return [repr(v) for v in arr.astype(float).tolist()]
    if arr.dtype.kind in "iu":
        return [str(v) for v in arr.tolist()]
    if arr.dtype.kind == "b":
        return ["true" if v else "false" for v in arr.tolist()]
    if arr.dtype.kind in "US":
        return [str(v) for v in arr.tolist()]
    return [cell(v) for v in arr.tolist()]


def table_csv(point, table) -> tuple[str, int]:
    """Return the CSV text of an event table with the grid point's columns in front.

    Parameters
    ----------
    point : sequence of (str, value)
        Grid columns (site, swept values), the same on every row.
    table : calendra.events.EventTable

    Returns
    -------
    text : str
        Header line and one line per event.
    rows : int
    """
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    names = [c for c, _ in point] + list(table.names)
    writer.writerow(names)
    n = len(table)
    front = [cell(v) for _, v in point]
    cols = [column_cells(table.columns[c]) for c in table.names]
    for i in range(n):
        writer.writerow(front + [col[i] for col in cols])
    return buf.getvalue(), n


def chunk_path(folder: Path, key: str) -> Path:
    """Return the path of chunk ``key`` in an output folder."""
    return Path(folder) / CHUNK_FOLDER / (key + CHUNK_SUFFIX)


def write_atomic(path: Path, text: str) -> None:
    """Write ``text`` (UTF-8) to ``path`` through a temporary file and :func:`os.replace`."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


def read_chunk(path: Path) -> tuple[list[str], list[list[str]]]:
    """Return the header and the rows (as text fields) of a chunk file."""
    with open(path, newline="", encoding="utf-8") as fh:
        reader = csv.reader(fh)
        header = next(reader, [])
        return header, list(reader)


def remove_stale_temporaries(folder: Path) -> int:
    """Remove temporary files left in ``chunks/`` by a run that was killed; return how many."""
    n = 0
    for tmp in (Path(folder) / CHUNK_FOLDER).glob(".*.tmp"):
        try:
            tmp.unlink()
            n += 1
        except OSError:
            pass
    return n
