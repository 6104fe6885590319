"""Reading the readings files: CSV, gzip-compressed CSV and Parquet, globs and column mapping.

Only the needed columns are read. CSV files are read in chunks. Parquet files whose row groups
each hold about one sensor are read one configured sensor at a time with a row filter, so
memory follows the largest sensor rather than the whole file; Parquet files with the sensors
mixed in every row group (where a filter would decode every group once per sensor) are
streamed in batches instead. Rows are turned into clean per-sensor frames by
:mod:`schedcheck.readings.cleaning`.
"""

from __future__ import annotations

import io
from collections.abc import Callable
from pathlib import Path

import numpy as np
import pandas as pd

from schedcheck.errors import InputError, InputProblems, NoReadingsError
from schedcheck.inputs.file_limits import special_files
from schedcheck.inputs.file_patterns import resolve_patterns
from schedcheck.inputs.readings_guard import header_line, header_problem, open_guarded
from schedcheck.inputs.readings_rows import Collector
from schedcheck.readings import cleaning as rd
from schedcheck.site import EXTRA_COLUMNS, Site
from schedcheck.site import LEVEL_COLUMNS as _LEVELS

# the numeric columns read per reading: levels and the optional rotation frequency
LEVEL_COLUMNS = _LEVELS + EXTRA_COLUMNS

CSV_CHUNK_ROWS = 500_000      # rows per CSV chunk: bounds memory (common practice, no source)
PARQUET_SUFFIXES = (".parquet", ".pq", ".parq")
CSV_SUFFIXES = (".csv", ".txt", ".tsv")


def readings_files(site: Site) -> list[Path]:
    """The readings files of a site, in read order (sorted within each pattern)."""
    files: list[Path] = []
    for pat, hits in resolve_patterns(site.base_dir, site.readings.files):
        if not hits:
            raise InputError(f"{pat!r} matches no file", path=site.path, key="readings.files")
        files.extend(h for h in hits if h not in files)
    return files


def _sniff_sep(head: str) -> str:
    counts = {sep: head.count(sep) for sep in (",", ";", "\t")}
    return max(counts, key=counts.get) if max(counts.values()) else ","


def _not_utf8(path: Path) -> InputError:
    """The error for a CSV file that is not UTF-8 text, naming its first bad line."""
    with open_guarded(path) as f:     # bounded lines, gzip or not
        if f.peek(2)[:2] in (b"\xff\xfe", b"\xfe\xff"):
            return InputError("is UTF-16 text; save or export it as UTF-8 CSV", path=path)
        for n, raw in enumerate(f, 1):
            try:
                raw.decode("utf-8")
            except UnicodeDecodeError as e:
                return InputError(f"not UTF-8 text (byte 0x{raw[e.start]:02x}); save or export "
                                  "the file as UTF-8", path=path, line=n)
    return InputError("not UTF-8 text; save or export the file as UTF-8", path=path)


def _mapping(site: Site, have: list[str], path: Path, line: int | None
             ) -> tuple[dict[str, str], tuple[str, ...]]:
    """our name -> file column, and the level columns present; raises for missing ones."""
    cols = site.readings.columns
    mapping: dict[str, str] = {}
    for ours in ("timestamp", "sensor"):
        names = _names(cols.get(ours, ours))
        theirs = next((n for n in names if n in have), None)
        if theirs is None:
            via = f" (mapped from {ours} in [readings] columns)" if ours in cols else ""
            wanted = " or ".join(repr(n) for n in names)
            raise InputError(f"no column {wanted}{via}; the file has: {', '.join(have)}"
                             + _mapping_hint(cols, have), path=path, line=line)
        mapping[ours] = theirs
    levels = []
    for ours in LEVEL_COLUMNS:
        theirs = next((n for n in _names(cols.get(ours, ours)) if n in have), None)
        if theirs is not None:
            mapping[ours] = theirs
            levels.append(ours)
    if not any(c in levels for c in rd.RMS_COLUMNS):
        raise InputError("no level column: need at least one of x_rms, y_rms, z_rms (map other "
                         f"names with [readings] columns); the file has: {', '.join(have)}",
                         path=path, line=line)
    return mapping, tuple(levels)


def _names(v: str | tuple[str, ...]) -> tuple[str, ...]:
    """The file column names configured for one of ours, in the order they are tried."""
    return (v,) if isinstance(v, str) else tuple(v)


def _mapping_hint(cols: dict, have: list[str]) -> str:
    """A ``columns = {...}`` line for columns whose names differ from ours only in case."""
    lower = {h.strip().lower(): h for h in have}
    pairs = dict(cols)
    for ours in ("timestamp", "sensor", *LEVEL_COLUMNS):
        if ours not in pairs and ours not in have and ours in lower:
            pairs[ours] = lower[ours]
    if pairs == cols:
        return ""
    body = ", ".join(f"{k} = " + ", ".join(f'"{x}"' for x in _names(v)).join(
        ("", "") if isinstance(v, str) else ("[", "]")) for k, v in pairs.items())
    return f"; add to [readings] in the site file: columns = {{ {body} }}"


def _read_csv(col: Collector, site: Site, path: Path, file_idx: int) -> tuple[str, ...]:
    first = header_line(path)        # bounded: a line without a break is refused, not read
    sep = _sniff_sep(first)
    names, raw_names = _header_names(path, first, sep)
    mapping, levels = _mapping(site, names, path, 1)
    why = header_problem(raw_names, set(mapping.values()))   # a column we read named twice
    if why:
        raise InputError(why, path=path, line=1)
    inverse = {v: k for k, v in mapping.items()}
    # Only the needed columns are read (usecols); a blank line stays a row (skip_blank_lines
    # off) so that file line = row index + 2 (header on line 1). Quoted fields holding line
    # breaks would shift the numbering; readings exports do not use them. The text comes
    # through a guarded stream (unpacked size, line length, damaged gzip data: readings_guard).
    with open_guarded(path) as stream:
        reader = pd.read_csv(stream, sep=sep, encoding="utf-8-sig",
                             usecols=list(mapping.values()), dtype=str, keep_default_na=False,
                             skip_blank_lines=False, chunksize=CSV_CHUNK_ROWS)
        for chunk in reader:
            lines = chunk.index.to_numpy(np.int64) + 2
            col.take(chunk.rename(columns=inverse), path, file_idx, levels, lines, lines,
                     comma_decimal=sep == ";")
    return levels


def _header_names(path: Path, first: str, sep: str) -> tuple[list[str], list[str]]:
    """The header's column names as the parser names them (a repeated name gets a suffix) and
    as written; refuses an empty file and too many columns."""
    if not first.strip():
        raise InputError("the file is empty (no header line)", path=path)
    raw = pd.read_csv(io.StringIO(first), header=None, nrows=1, sep=sep, dtype=str,
                      keep_default_na=False)
    written = [str(x) for x in raw.iloc[0].tolist()] if len(raw) else []
    why = header_problem(written, set())      # the number of columns only
    if why:
        raise InputError(why, path=path, line=1)
    head = pd.read_csv(io.StringIO(first), nrows=0, sep=sep)
    return [str(c) for c in head.columns], written


def _read_parquet(col: Collector, site: Site, path: Path, file_idx: int) -> tuple[str, ...]:
    import pyarrow as pa
    import pyarrow.compute as pc
    import pyarrow.parquet as pq

    try:
        schema = pq.ParquetFile(path).schema_arrow
    except (pa.ArrowInvalid, OSError) as e:
        raise InputError(f"not a readable Parquet file ({e})", path=path) from None
    mapping, levels = _mapping(site, list(schema.names), path, None)
    inverse = {v: k for k, v in mapping.items()}
    scol = mapping["sensor"]
    stype = schema.field(scol).type
    numeric = pa.types.is_integer(stype)
    wanted: dict = {}   # value in the file -> configured sensor id
    for s in col.owner:
        if not numeric:
            wanted[s] = s
        elif s.strip().lstrip("-").isdigit():
            wanted[int(s)] = s
    rename = {str(v): s for v, s in wanted.items()} if numeric else {}
    pf = pq.ParquetFile(path)
    names = list(mapping.values())
    if not _clustered(pf, scol, list(wanted)):
        # rows of all sensors mixed in every row group: one streaming pass, memory follows the
        # batch size
        pos = 0
        for batch in pf.iter_batches(batch_size=CSV_CHUNK_ROWS, columns=names):
            frame = _batch_frame(batch, scol).rename(columns=inverse)
            if rename:   # whole-number ids: "0417" in the site file is 417 in the file
                frame["sensor"] = frame["sensor"].map(lambda v: rename.get(v, v))
            col.take(frame, path, file_idx, levels, None,
                     np.arange(pos, pos + len(frame), dtype=np.int64))
            pos += len(frame)
        return levels
    # row groups hold few sensors each: read one sensor at a time with a row filter, so memory
    # follows the largest sensor, not the whole file
    counts = pc.value_counts(pq.read_table(path, columns=[scol]).column(0).combine_chunks())
    for item in counts.to_pylist():
        s = str(item["values"]).strip() if item["values"] is not None else ""
        if s and s not in col.owner and s not in rename:
            col.unconfigured[s] += item["counts"]
    for value, name in wanted.items():
        table = pq.read_table(path, columns=names, filters=[(scol, "==", value)])
        if table.num_rows == 0:
            continue
        frame = table.to_pandas().rename(columns=inverse)
        frame["sensor"] = name
        col.take(frame, path, file_idx, levels, None, np.arange(len(frame), dtype=np.int64))
        del table, frame
    return levels


def _batch_frame(batch, scol: str) -> pd.DataFrame:
    """A Parquet batch as a frame, its sensor column as text ("" where missing) made from the
    distinct ids (dictionary-encoded in Arrow), not converted row by row."""
    import pyarrow.compute as pc

    enc = pc.dictionary_encode(batch.column(scol))
    ids = ["" if v is None else str(v) for v in enc.dictionary.to_pylist()]
    idx = pc.fill_null(enc.indices, len(ids)).to_numpy(zero_copy_only=False)
    frame = batch.drop_columns([scol]).to_pandas()
    frame[scol] = np.asarray(ids + [""], dtype=object)[idx]
    return frame


def _clustered(pf, column: str, wanted: list) -> bool:
    """True when row-group statistics show that per-sensor filtered reads skip most groups."""
    md = pf.metadata
    if md.num_row_groups < 2 or not wanted:
        return False
    idx = pf.schema_arrow.get_field_index(column)
    hits = 0
    for g in range(md.num_row_groups):
        st = md.row_group(g).column(idx).statistics
        if st is None or not st.has_min_max:
            return False
        try:
            hits += sum(1 for v in wanted if st.min <= v <= st.max)
        except TypeError:
            return False
    return hits <= md.num_row_groups + len(wanted)   # about one sensor per group


class ReadingsSource:
    """The readings files of one site, for one command: reads them, and remembers the last
    whole read (no window) for one more read.

    Commands first find the data's range (a whole read), then read their window; the window
    is cut from the remembered whole read without parsing the files again. The job opens one
    source per command and passes it on; nothing is kept between commands. A change to any
    file (time stamp or size) or to the site's readings settings makes the next read parse the
    files again.
    """

    def __init__(self, site: Site) -> None:
        self.site = site
        self._kept: tuple[tuple, Collector] | None = None

    def read(self, start: pd.Timestamp | None = None, end: pd.Timestamp | None = None, *,
             skip_bad_rows: bool | None = None, keep: bool = False,
             progress: Callable[[str], None] | None = None) -> rd.Readings:
        """Clean readings of the site's sensors; the parameters are those of
        :func:`read_readings`, and:

        keep : bool
            Remember this whole read (no window) for the next call, which then cuts its window
            from it; a windowed read lets the remembered one go.
        """
        site = self.site
        skip = site.readings.skip_bad_rows if skip_bad_rows is None else skip_bad_rows
        files = readings_files(site)
        key = _files_key(site, files)
        if self._kept is not None and self._kept[0] == key:
            col = self._kept[1]      # read whole moments ago (the data range): reuse
            if start is not None or end is not None:
                self._kept = None    # the window is what the command wanted: let the memory go
        else:
            self._kept = None
            col = Collector(site, start, end)
            for i, path in enumerate(files):
                if progress is not None:
                    progress(f"reading {path.name} ({i + 1} of {len(files)})")
                _read_file(col, site, path, i)
            if keep and start is None and end is None:
                self._kept = (key, col)
        problems = col.file_errors() + ([] if skip else col.bad_row_errors())
        if problems:
            raise InputProblems(problems)
        return _assemble(col, site, files, start, end, skip, keep_parts=self._kept is not None)

    def forget(self) -> None:
        """Let the remembered whole read go (frees its memory)."""
        self._kept = None


def read_readings(site: Site, start: pd.Timestamp | None = None, end: pd.Timestamp | None = None,
                  *, skip_bad_rows: bool | None = None,
                  progress: Callable[[str], None] | None = None) -> rd.Readings:
    """Read every readings file of a site and return clean readings of its sensors.

    Parameters
    ----------
    site : Site
        The validated site.
    start, end : pandas.Timestamp, optional
        UTC window ``[start, end)``; readings outside it are not kept. None: no limit.
    skip_bad_rows : bool, optional
        Drop malformed rows (counted and named in the result) instead of failing; None takes
        ``[readings] skip_bad_rows`` from the site file.
    progress : callable, optional
        Called with a short message before each file is read.

    Raises
    ------
    InputProblems
        For unreadable files, missing columns, timestamps without an offset, bad rows (unless
        skipped), and when no configured sensor has a reading in the window.

    See Also
    --------
    ReadingsSource : the same read, remembering a whole read for the next window.
    """
    return ReadingsSource(site).read(start, end, skip_bad_rows=skip_bad_rows, progress=progress)


def _files_key(site: Site, files: list[Path]) -> tuple:
    """What a remembered read depends on: each file's name, time stamp and size, and the
    site's readings settings."""
    stats = []
    for f in files:
        st = f.stat()
        stats.append((str(f), st.st_mtime_ns, st.st_size))
    r = site.readings
    return (tuple(stats), site.timezone, r.naive_time, r.years, tuple(sorted(r.columns.items())),
            tuple(sorted((c.sensor, c.key) for c in site.components)))


def _read_file(col: Collector, site: Site, path: Path, i: int) -> None:
    try:
        name = path.name.lower()
        if name.endswith(PARQUET_SUFFIXES):
            _read_parquet(col, site, path, i)
        elif name.endswith(CSV_SUFFIXES) or name.endswith(tuple(s + ".gz" for s in
                                                                 CSV_SUFFIXES)):
            _read_csv(col, site, path, i)
        else:
            raise InputError("unknown readings format: name files .csv, .csv.gz or .parquet",
                             path=path)
    except InputError as e:
        col.problems.append(e)
    except EOFError:
        col.problems.append(InputError("the compressed data ends early: the file is cut short "
                                       "(copy or download it again)", path=path))
    except UnicodeDecodeError as e:
        if path.name.lower().endswith(PARQUET_SUFFIXES):
            col.problems.append(InputError(f"cannot read the file ({e})", path=path))
        else:
            col.problems.append(_not_utf8(path))
    except (OSError, pd.errors.ParserError) as e:
        col.problems.append(InputError(f"cannot read the file ({type(e).__name__}: {e})",
                                       path=path))


def _assemble(col: Collector, site: Site, files, start, end, skip: bool,
              keep_parts: bool = False) -> rd.Readings:
    by_sensor, health, warns = {}, {}, []
    max_gap = site.readings.max_gap
    for s in list(col.parts):
        # freed sensor by sensor (unless kept for the next call): memory stays near the result's
        parts = col.parts[s] if keep_parts else col.parts.pop(s)
        if parts:
            sets = [set(c for c in p.columns if c in LEVEL_COLUMNS) for p in parts]
            cols = tuple(c for c in LEVEL_COLUMNS if all(c in x for x in sets))
            every = tuple(c for c in LEVEL_COLUMNS if any(c in x for x in sets))
            if cols != every:
                lost = ", ".join(sorted(set(every) - set(cols)))
                warns.append(f"sensor {s}: level columns {lost} are missing from, or left "
                             "empty in, some files and are not used")
            if any("early" in p.columns for p in parts):
                parts = [p if "early" in p.columns else
                         p.assign(early=rd.NAT, late=rd.NAT, wall=rd.NAT) for p in parts]
            data = pd.concat(parts, ignore_index=True)
            if not any(c in cols for c in rd.RMS_COLUMNS):
                raise InputProblems([InputError(
                    f"sensor {s}: its files share no RMS column (have: {', '.join(every)})",
                    path=site.path, key="readings.files")])
            frame, h, w = rd.clean_sensor(data, sensor=s, columns=cols, start=start, end=end,
                                          max_gap=max_gap)
            warns.extend(w)
        else:
            frame = pd.DataFrame({"timestamp": pd.Series([], dtype="datetime64[ns, UTC]"),
                                  "x_rms": pd.Series([], dtype="float64")})
            h = rd.SensorHealth(sensor=s)
            rd.measure_gaps(h, np.array([], np.int64), start, end, max_gap)
        h.component = col.owner[s]
        h.bad_rows = col.bad_by_sensor.get(s, 0)
        if h.count == 0:
            near = [u for u in col.unconfigured if u.strip().casefold() == s.strip().casefold()]
            warns.append(f"sensor {s} ({col.owner[s]}) has no readings"
                         + (" in the window" if start is not None else "")
                         + "; its time is counted as no data"
                         + (f"; the files have sensor {near[0]!r} (ids must match exactly, "
                            "case included)" if near else ""))
        by_sensor[s], health[s] = frame, h
    if col.owner and all(h.count == 0 for h in health.values()):
        span = (f" between {start:%Y-%m-%d %H:%M}Z and {end:%Y-%m-%d %H:%M}Z"
                if start is not None and end is not None else "")
        seen = (f"; the files hold other sensors: {', '.join(sorted(col.unconfigured)[:8])}"
                if col.unconfigured else "")
        if col.bad_total and col.bad_examples:
            # every row was unreadable: that, not a missing sensor, is what to fix
            rows = "1 bad row was" if col.bad_total == 1 else f"{col.bad_total:,} bad rows were"
            seen += f"; {rows} skipped, the first: {col.bad_examples[0]}"
        raise InputProblems([NoReadingsError(
            f"no readings for any configured sensor ({', '.join(col.owner)}){span}{seen}",
            nothing_else=not seen, path=site.path, key="readings.files")])
    skipped = None
    if skip and col.bad_total:
        first = "; ".join(str(e) for e in col.bad_examples[:3])
        skipped = (f"skipped {col.bad_total:,} bad row{'s' if col.bad_total > 1 else ''} "
                   f"(first: {first})")
        warns.append(skipped)
    warns.extend(f"{f}: matched by readings.files but not a regular file (a device, pipe or "
                 "socket); not read" for f in special_files(site.base_dir, site.readings.files))
    return rd.Readings(by_sensor=by_sensor, health=health, unconfigured=dict(col.unconfigured),
                       bad_rows_count=col.bad_total,
                       bad_rows_examples=[str(e) for e in col.bad_examples],
                       bad_rows_problems=col.bad_row_errors(), warnings=warns,
                       bad_rows_warning=skipped,
                       start=start, end=end, files=tuple(str(f) for f in files))
