"""Bounds on reading a CSV readings file: unpacked size, line length, header columns, damage.

Readings files come from gateways and from other people. A gzip file of a few megabytes can
unpack to many gigabytes (a "decompression bomb"); a file with no line break holds one line of
any length, which a CSV parser keeps in memory whole; a header of tens of thousands of columns
costs time in every check. :func:`open_guarded` gives the file's text bytes through a stream
that counts what it hands on and refuses, with a one-line :class:`~schedcheck.errors.InputError`
naming the file and line, as soon as a bound is passed, so neither memory nor time runs away.
It also words a gzip file damaged in the middle or cut short as one plain line.
The bounds are documented in docs/readings.md ("Limits").
"""

from __future__ import annotations

import gzip
import io
import os
import zlib
from collections import Counter
from pathlib import Path

from schedcheck.errors import InputError, excerpt

#: longest line of a readings CSV file [bytes] (header or data). A readings row is about 60
#: bytes and a header of 1,000 columns of 60 characters about 60 kB (common practice, no source)
MAX_LINE_BYTES = 1024 * 1024

#: most columns in a readings CSV header; an export of one sensor per row has a dozen or two
#: (common practice, no source)
MAX_COLUMNS = 1000

#: most a gzip file may unpack to, as a multiple of its compressed size [-]. Readings CSV
#: packs a few times (measured: the seeded test site's readings 7.3 times at gzip level 9,
#: the example site's readings.csv.gz 6.1 times); a file of empty lines or one repeated row
#: packs about 1,000 times, which only a crafted file does (the bound is common practice, no
#: source). Applied once :data:`RATIO_FROM_BYTES` are unpacked, so a small, very regular
#: file is never refused for its ratio.
MAX_UNPACK_RATIO = 200

#: unpacked size from which :data:`MAX_UNPACK_RATIO` applies [bytes] (common practice, no source)
RATIO_FROM_BYTES = 64 * 1024 * 1024

#: most a gzip readings file may unpack to [bytes]: a year of one-minute rows of 20 sensors is
#: about 0.7 GB of text (common practice, no source)
MAX_UNPACKED_BYTES = 16 * 1024**3

_MIB = 1024 * 1024

#: most unpacked bytes read from the file at a time: never more than a line may hold, and
#: small enough that a damaged spot is placed within this much text
READ_BLOCK = 64 * 1024


def is_gzip(path: Path) -> bool:
    """True when the file starts with the gzip magic bytes (whatever its name)."""
    with open(path, "rb") as f:
        return f.read(2) == b"\x1f\x8b"


class GuardedStream(io.RawIOBase):
    """The text bytes of a readings file (unpacked if gzip), refusing what passes a bound.

    Counts the bytes and line breaks handed on, so an error can say about where it is.
    """

    def __init__(self, path: Path) -> None:
        super().__init__()
        self.path = path
        self.packed = is_gzip(path)
        self.size = os.stat(path).st_size
        self._f = gzip.open(path, "rb") if self.packed else open(path, "rb")
        self.total = 0          # bytes handed on
        self.lines = 0          # line breaks handed on
        self.since = 0          # bytes since the last line break

    def readable(self) -> bool:
        return True

    def readinto(self, buffer) -> int:
        data = self.read_block(min(len(buffer), READ_BLOCK))  # small: errors say about where
        n = len(data)
        buffer[:n] = data
        return n

    def read_block(self, want: int, packed_so_far: bool = False) -> bytes:
        """Up to ``want`` bytes of text, counted and checked; damaged gzip data is worded.

        ``packed_so_far`` compares the unpacked size with the compressed bytes read so far
        (a scan), not with the whole file (a reader, which cannot look ahead).
        """
        try:
            data = self._f.read(want)
        except EOFError:
            raise self._error("the compressed data ends early: the file is cut short") from None
        except gzip.BadGzipFile as e:
            if "CRC" in str(e) or "length" in str(e):   # found at the end: no place to name
                raise InputError("the compressed data is damaged: what it unpacks to does not "
                                 "match its check sum (found on unpacking it to its end; the "
                                 "damage may be anywhere); copy or download the file again",
                                 path=self.path) from None
            raise self._error("the compressed data is damaged (not valid gzip data)") from None
        except zlib.error:
            raise self._error("the compressed data is damaged and cannot be unpacked") from None
        if data:
            self._count(data)
            if self.packed:
                size_problem(self.path, self.total,
                             self._f.fileobj.tell() if packed_so_far else self.size)
        return data

    def _count(self, data: bytes) -> None:
        self.total += len(data)
        first = data.find(b"\n")
        if first < 0:
            self.since += len(data)
        else:
            # lines wholly inside this block are shorter than the block, which is never
            # longer than MAX_LINE_BYTES
            if self.since + first > MAX_LINE_BYTES:
                self.since += first
            else:
                self.lines += data.count(b"\n")
                self.since = len(data) - data.rfind(b"\n") - 1
        if self.since > MAX_LINE_BYTES:
            raise InputError(f"line {self.lines + 1} is longer than {MAX_LINE_BYTES // _MIB} "
                             "MiB without a line break; this is not a readings CSV file (or "
                             "its line breaks were lost)", path=self.path, line=self.lines + 1)

    def _error(self, text: str) -> InputError:
        where = (f" (after {self.total / _MIB:,.1f} MiB of text, near line {self.lines + 1})"
                 if self.total else f" (in its first {READ_BLOCK // 1024} kB of text)")
        return InputError(f"{text}{where}; copy or download the file again", path=self.path)

    def close(self) -> None:
        try:
            self._f.close()
        finally:
            super().close()


def size_problem(path: Path, unpacked: int, packed: int) -> None:
    """Refuse ``unpacked`` bytes of text from ``packed`` bytes of gzip data past the bounds."""
    if unpacked > MAX_UNPACKED_BYTES:
        raise InputError(f"unpacks to more than {MAX_UNPACKED_BYTES / 1024**3:.0f} GiB, the most "
                         "a readings file may hold; split it into smaller files", path=path)
    if unpacked > RATIO_FROM_BYTES and unpacked > MAX_UNPACK_RATIO * max(packed, 1):
        raise InputError(f"unpacks to more than {MAX_UNPACK_RATIO} times its compressed size "
                         f"({unpacked / _MIB:,.0f} MiB of text from {packed / _MIB:,.1f} "
                         "MiB), which readings never do: refused as a possible decompression "
                         "bomb",
                         path=path)


def scan_packed(path: Path) -> None:
    """Unpack a gzip file once, without keeping it, and refuse it past the size bounds.

    The text is counted as it unpacks (at the speed of zlib, a few hundred MB a second),
    against the compressed bytes read so far, so a bomb is refused after
    :data:`RATIO_FROM_BYTES` of text, before any of it is parsed; damaged data is refused
    here too. A sound file costs one extra unpacking.
    """
    with GuardedStream(path) as raw:
        while raw.read_block(READ_BLOCK, packed_so_far=True):
            pass


def open_guarded(path: Path) -> io.BufferedReader:
    """The file's text bytes through a :class:`GuardedStream` (close it, or use ``with``)."""
    return io.BufferedReader(GuardedStream(path), buffer_size=64 * 1024)


def header_line(path: Path) -> str:
    """The first line of a CSV readings file (no line break), read within the bounds.

    Raises
    ------
    InputError
        A first line longer than :data:`MAX_LINE_BYTES`, or damaged compressed data.
    UnicodeDecodeError
        The line is not UTF-8 (callers word it).
    """
    if is_gzip(path):
        scan_packed(path)
    with open_guarded(path) as f:
        raw = f.readline(MAX_LINE_BYTES + 2)
    return raw.decode("utf-8-sig").rstrip("\r\n")


def header_problem(names: list[str], used: set[str]) -> str | None:
    """Why a header is refused: too many columns, or a column we read named twice; or None.

    Linear in the number of columns (one count of the names).
    """
    if len(names) > MAX_COLUMNS:
        return (f"the header has {len(names):,} columns; a readings file may have at most "
                f"{MAX_COLUMNS:,} (export only the columns needed)")
    counts = Counter(names)
    for name in names:
        if name in used and counts[name] > 1:
            at = [i + 1 for i, n in enumerate(names) if n == name]
            shown = ", ".join(map(str, at[:10])) + (", ..." if len(at) > 10 else "")
            return (f"column {excerpt(name)} appears {len(at)} times in the header (columns "
                    f"{shown}); rename the one not meant")
    return None
