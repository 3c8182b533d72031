"""Writer of SPICE SPK kernels holding Chebyshev position segments (type 2).

An SPK kernel is a DAF (Double precision Array File) made of 1024-byte
records:

* record 1, the *file record*: identification ``DAF/SPK``, the summary shape
  (ND = 2 doubles and NI = 6 integers per summary), the internal file name,
  the numbers of the first and last summary records, the first free word
  address, the byte order ``LTL-IEEE`` and the FTP corruption test string;
* records 2 ... F-1: the comment area (ASCII text, 1000 characters per
  record, lines separated by NUL, ended by EOT);
* record F: one summary record (next, previous, count, then the summaries);
* record F+1: the matching name record (one 40-character name per summary);
* from record F+2 on: the segment arrays, one after another.

A type 2 segment array is a sequence of ``N`` records of ``RSIZE = 2 + 3 K``
doubles, ``[MID, RADIUS, X_0..X_{K-1}, Y_0.., Z_0..]``, each the Chebyshev
series of one fixed-length interval ``[MID - RADIUS, MID + RADIUS]`` in
seconds past J2000 TDB (positions in km), followed by the four doubles
``[INIT, INTLEN, RSIZE, N]``.  Its summary holds the start and end epochs
(seconds past J2000 TDB) as doubles and the integers target, center, frame,
data type, first and last word address (1-based, inclusive).

:func:`chebyshev_segments` describes excerpts of equal-interval coefficient
arrays (as JPL ephemerides store them) as segments, and :func:`write_atomic`
publishes a file only once it is complete.

Since every segment's size is known before writing, the layout is computed
first and the file is then written strictly sequentially, in chunks, so that
a kernel of any size needs little memory and progress can be reported.

References
----------
NAIF, "DAF Required Reading" and "SPK Required Reading" (SPICE toolkit
documentation), sections on the file record, summary records and SPK data
type 2.
"""

from __future__ import annotations

import os
import struct
from dataclasses import dataclass
from pathlib import Path
from typing import BinaryIO, Callable, Optional, Sequence

RECORD_BYTES = 1024
WORDS_PER_RECORD = RECORD_BYTES // 8
#: Doubles and integers per segment summary of an SPK file.
ND, NI = 2, 6
#: Bytes of one summary (and of one name), padded to whole doubles.
SUMMARY_BYTES = 8 * (ND + (NI + 1) // 2)
SUMMARIES_PER_RECORD = (RECORD_BYTES - 24) // SUMMARY_BYTES
#: Test string that reveals a file damaged by a text-mode (FTP ASCII) transfer.
FTPSTR = b"FTPSTR:\r:\n:\r\n:\r\x00:\x81:\x10\xce:ENDFTP"
#: Frame code of the J2000 (ICRF-aligned) equatorial frame.
FRAME_J2000 = 1
#: J2000.0 as a TDB Julian Day, and seconds per day.
J2000_JD = 2451545.0
DAY_S = 86400.0
#: Records of coefficients written per chunk.
CHUNK_RECORDS = 8192

_FILE_RECORD = struct.Struct("<8sii60siii8s603s28s297s")
_SUMMARY = struct.Struct("<2d6i")
_CONTROL = struct.Struct("<3d")


@dataclass(frozen=True)
class Type2Segment:
    """One SPK type 2 segment whose coefficients come from a callable.

    Attributes
    ----------
    target, center : int
        NAIF codes of the body and of the origin of its position vector.
    name : str
        Segment name (at most 40 ASCII characters), e.g. the source ephemeris.
    start_second, end_second : float
        Span the segment claims to cover, seconds past J2000 TDB.
    init : float
        Start of the first Chebyshev interval, seconds past J2000 TDB.
    intlen : float
        Length of each interval, seconds.
    n_records : int
        Number of intervals.
    n_coeff : int
        Chebyshev coefficients per coordinate (polynomial degree + 1).
    coefficients : callable
        ``coefficients(i, j)`` returns an array_like of shape
        ``(j - i, 3, n_coeff)`` with the X, Y, Z coefficients (km) of
        intervals ``i`` to ``j - 1``.
    frame : int
        Reference frame code; 1 = J2000.
    label : str
        Name shown in progress reports (e.g. the body).
    """

    target: int
    center: int
    name: str
    start_second: float
    end_second: float
    init: float
    intlen: float
    n_records: int
    n_coeff: int
    coefficients: Callable[[int, int], object]
    frame: int = FRAME_J2000
    label: str = ""

    @property
    def rsize(self) -> int:
        """Doubles per record: MID, RADIUS and 3 * n_coeff coefficients."""
        return 2 + 3 * self.n_coeff

    @property
    def n_words(self) -> int:
        """Doubles in the whole segment array, trailer included."""
        return self.n_records * self.rsize + 4


def _comment_records(text: str) -> bytes:
    data = text.encode("ascii").replace(b"\n", b"\0") + b"\x04"
    blocks = [data[i:i + 1000] for i in range(0, len(data), 1000)]
    return b"".join(block.ljust(RECORD_BYTES, b"\0") for block in blocks)


def write_spk(file: BinaryIO, segments: Sequence[Type2Segment], *,
              internal_name: str = "", comment: str = "",
              progress: Optional[Callable[[int, int, str], None]] = None) -> int:
    """Write an SPK kernel of type 2 segments to an open binary file.

    Parameters
    ----------
    file : binary file object
        Written from its current position, which must be the start of the file.
    segments : sequence of Type2Segment
        The segments, in the order a reader should search them (a reader
        takes the last segment that matches a center, target and time).
    internal_name : str
        Internal file name (at most 60 ASCII characters).
    comment : str
        ASCII text stored in the comment area.
    progress : callable, optional
        ``progress(done, total, label)`` called after each chunk; ``done``
        and ``total`` count coefficient records, ``label`` names the segment.

    Returns
    -------
    int
        Number of bytes written.

    Raises
    ------
    ValueError
        For more segments than one summary record holds, or malformed
        coefficient arrays.
    """
    import numpy as np

    if not segments:
        raise ValueError("an SPK kernel needs at least one segment")
    if len(segments) > SUMMARIES_PER_RECORD:
        raise ValueError(f"at most {SUMMARIES_PER_RECORD} segments are supported, got {len(segments)}")

    comments = _comment_records(comment) if comment else b""
    summary_record = 2 + len(comments) // RECORD_BYTES
    first_word = (summary_record + 1) * WORDS_PER_RECORD + 1
    addresses = []
    word = first_word
    for seg in segments:
        addresses.append((word, word + seg.n_words - 1))
        word += seg.n_words
    free = word

    file_record = _FILE_RECORD.pack(
        b"DAF/SPK ", ND, NI, internal_name.encode("ascii")[:60].ljust(60),
        summary_record, summary_record, free, b"LTL-IEEE",
        b"\0" * 603, FTPSTR, b"\0" * 297)
    summaries = bytearray(_CONTROL.pack(0.0, 0.0, float(len(segments))))
    names = bytearray()
    for seg, (start, end) in zip(segments, addresses):
        summaries += _SUMMARY.pack(seg.start_second, seg.end_second, seg.target,
                                   seg.center, seg.frame, 2, start, end)
        names += seg.name.encode("ascii")[:SUMMARY_BYTES].ljust(SUMMARY_BYTES)
    written = file.write(file_record)
    written += file.write(comments)
    written += file.write(bytes(summaries.ljust(RECORD_BYTES, b"\0")))
    written += file.write(bytes(names.ljust(RECORD_BYTES, b" ")))

    total = sum(seg.n_records for seg in segments)
    done = 0
    for seg in segments:
        label = f"{seg.label or seg.name} {seg.center}->{seg.target}"
        radius = 0.5 * seg.intlen
        for i in range(0, seg.n_records, CHUNK_RECORDS):
            j = min(i + CHUNK_RECORDS, seg.n_records)
            coeff = np.asarray(seg.coefficients(i, j), dtype=np.float64)
            if coeff.shape != (j - i, 3, seg.n_coeff):
                raise ValueError(f"segment {label}: coefficients of shape {coeff.shape}, "
                                 f"expected {(j - i, 3, seg.n_coeff)}")
            block = np.empty((j - i, seg.rsize), dtype="<f8")
            block[:, 0] = seg.init + (np.arange(i, j) + 0.5) * seg.intlen
            block[:, 1] = radius
            block[:, 2:] = coeff.reshape(j - i, 3 * seg.n_coeff)
            written += file.write(block.tobytes())
            done += j - i
            if progress is not None:
                progress(done, total, label)
        trailer = np.array([seg.init, seg.intlen, seg.rsize, seg.n_records], dtype="<f8")
        written += file.write(trailer.tobytes())
    padding = -written % RECORD_BYTES
    written += file.write(b"\0" * padding)
    return written


def chebyshev_segments(sources, span_jd, start_jd, end_jd, name: str) -> list:
    """Describe excerpts of equal-interval Chebyshev coefficient arrays as type 2 segments.

    Parameters
    ----------
    sources : iterable of (label, target, center, coefficients, scale)
        ``coefficients`` is an array of shape ``(n_sets, 3, n_coeff)`` (km)
        whose ``n_sets`` intervals divide ``span_jd`` equally, each series
        over ``t`` in [-1, 1]; it may be a memory map, read chunk by chunk.
        ``None`` stands for a vector that is zero at all times.  ``scale``
        multiplies every coefficient (a series is linear in them).
    span_jd : (float, float)
        Start and end of the arrays' coverage, TDB Julian Days.
    start_jd, end_jd : float
        Span to cover, TDB Julian Days inside ``span_jd``; whole intervals
        covering it are kept and each summary claims exactly this span.
    name : str
        Segment name (the source ephemeris).

    Returns
    -------
    list of Type2Segment
    """
    import numpy as np

    lo, hi = span_jd
    start_second = (start_jd - J2000_JD) * DAY_S
    end_second = (end_jd - J2000_JD) * DAY_S
    segments = []
    for label, target, center, coeff, scale in sources:
        if coeff is None:
            segments.append(Type2Segment(
                target, center, name, start_second, end_second, start_second,
                end_second - start_second, 1, 1, lambda i, j: np.zeros((j - i, 3, 1)),
                label=label))
            continue
        n_sets, axes, n_coeff = coeff.shape
        if axes != 3:
            raise ValueError(f"{label}: coefficient array of shape {coeff.shape}, expected (n, 3, k)")
        days = (hi - lo) / n_sets
        first = max(0, int(np.floor((start_jd - lo) / days)))
        last = min(n_sets, int(np.ceil((end_jd - lo) / days)))

        def chunk(i, j, coeff=coeff, first=first, scale=scale):
            block = coeff[first + i:first + j]
            return block if scale == 1.0 else block * scale

        segments.append(Type2Segment(
            target, center, name, start_second, end_second,
            (lo + first * days - J2000_JD) * DAY_S, days * DAY_S,
            last - first, n_coeff, chunk, label=label))
    return segments


def write_atomic(path: Path, write) -> None:
    """Write a file so that readers see either the old content or the complete new one.

    ``write(file, tmp_path)`` fills a temporary file created beside ``path``;
    it is then flushed, fsynced and renamed over ``path`` (``os.replace``),
    and the directory is fsynced.  On any exception, including
    KeyboardInterrupt, the temporary file is removed and ``path`` is untouched.
    """
    import tempfile

    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp")
    try:
        if hasattr(os, "fchmod"):
            os.fchmod(fd, 0o644)  # mkstemp makes it private; a cache file need not be
        with os.fdopen(fd, "wb") as file:
            write(file, Path(tmp))
            file.flush()
            os.fsync(file.fileno())
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise
    try:
        dir_fd = os.open(path.parent, os.O_RDONLY)
    except OSError:
        return  # no directory handles on this platform
    try:
        os.fsync(dir_fd)
    except OSError:
        pass
    finally:
        os.close(dir_fd)


def sha256_file(path) -> str:
    """Return the hexadecimal SHA-256 of the file at ``path``."""
    import hashlib

    digest = hashlib.sha256()
    with open(path, "rb") as file:
        while chunk := file.read(1 << 22):
            digest.update(chunk)
    return digest.hexdigest()
