"""Writing the demo site to a folder, and reading its saved truth back.

Layout written by :func:`write_demo` (all of it invented data, see ``README.txt``)::

    DIR/site.toml                  the site file
    DIR/calendars/*.ics            occupied hours per use, and the night-cooling windows
    DIR/readings/*.csv.gz          readings of two gateways (CSV, gzip)
    DIR/readings/*.parquet         readings of a third gateway (Parquet)
    DIR/truth/runs.csv             what an audit should recover: component, state, start, end
                                   (UTC ISO 8601; state run / off / no_data over the data gaps)
    DIR/truth/machine_runs.csv     what the machines really did (run / off only, no gaps)
    DIR/truth/speeds.csv           the true speeds of the drives and two-speed fans: component,
                                   start (UTC), speed (held to the component's next row)
    DIR/truth/faults.json          the planted faults, the data gaps and the clean components
    DIR/README.txt                 what this folder is

Every file is byte-for-byte the same for the same seed and months (gzip headers carry no time
or name; JSON keys are in a fixed order), so the demo is reproducible.
:func:`read_demo_truth` loads ``truth/`` back for tests and for people checking an audit.
"""

from __future__ import annotations

import gzip
import io
import json
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.csv as pacsv
import pyarrow.parquet as pq

from schedcheck.demo.build import DemoSite, machine_truth, observed_truth
from schedcheck.demo.plan import SITE_NAME, TZ
from schedcheck.demo.trends import TRENDS_EXPORT, trend_export, trend_truth
from schedcheck.demo.weather import WEATHER_FILE
from schedcheck.errors import InputError
from schedcheck.intervals import NS_PER_S, from_ns, to_ns
from schedcheck.outputs.schema import TRUTH_SCHEMA

README_FIRST_LINE = "INVENTED DEMO DATA written by `schedcheck demo`."
_TIME_FMT = "%Y-%m-%dT%H:%M:%SZ"


def _iso(ts: pd.Timestamp) -> str:
    return pd.Timestamp(ts).tz_convert("UTC").strftime(_TIME_FMT)


def _runs_csv(frame: pd.DataFrame) -> bytes:
    out = frame[["component", "state", "start", "end"]].copy()
    out["start"] = out["start"].dt.strftime(_TIME_FMT)
    out["end"] = out["end"].dt.strftime(_TIME_FMT)
    return out.to_csv(index=False, lineterminator="\n").encode()


def speeds_csv(demo: DemoSite) -> bytes:
    """``truth/speeds.csv``: ``component, start, speed``: each speed [-] holds from its UTC
    start to the component's next row, while the component runs."""
    rows = [pd.DataFrame({"component": key, "start": s.index.strftime(_TIME_FMT),
                          "speed": s.to_numpy(dtype=float).round(4)})
            for key, s in demo.speed.items() if len(s)]
    out = (pd.concat(rows, ignore_index=True) if rows
           else pd.DataFrame(columns=["component", "start", "speed"]))
    return out.to_csv(index=False, lineterminator="\n").encode()


def _iso_seconds(ts: pd.Series) -> pa.Array:
    """Whole-second UTC instants as ``YYYY-MM-DDTHH:MM:SSZ`` strings (vectorised: strftime
    runs once per distinct minute, the seconds are filled in as bytes)."""
    sec = to_ns(ts) // NS_PER_S
    uniq, inv = np.unique(sec // 60, return_inverse=True)
    head = from_ns(uniq * 60 * NS_PER_S).strftime("%Y-%m-%dT%H:%M:").to_numpy().astype("S17")
    out = np.empty((sec.size, 20), dtype="S1")
    out[:, :17] = head.view("S1").reshape(-1, 17)[inv]
    out[:, 17] = (48 + (sec % 60) // 10).astype(np.uint8).view("S1")
    out[:, 18] = (48 + sec % 10).astype(np.uint8).view("S1")
    out[:, 19] = b"Z"
    return pa.array(out.view("S20").ravel(), type=pa.binary()).cast(pa.string())


def _readings_csv_gz(frame: pd.DataFrame) -> bytes:
    """CSV (header, then plain unquoted fields; levels in their shortest form), gzip-compressed
    with no name or time in the header. Arrow's CSV writer is several times faster than
    pandas' here."""
    cols = {"timestamp": _iso_seconds(frame["timestamp"]),
            "sensor": pa.array(frame["sensor"].to_numpy(dtype=object), type=pa.string())}
    for c in frame.columns[2:]:   # NaN (a blank rotation_hz) is written as an empty cell
        cols[c] = pa.array(frame[c].to_numpy(dtype=float), from_pandas=True)
    buf = io.BytesIO()
    buf.write((",".join(cols) + "\n").encode())
    pacsv.write_csv(pa.table(cols), buf,
                    pacsv.WriteOptions(include_header=False, quoting_style="none"))
    return gzip.compress(buf.getvalue(), compresslevel=6, mtime=0)


def _readings_parquet(frame: pd.DataFrame, path: Path) -> None:
    table = pa.Table.from_pandas(frame, preserve_index=False)
    table = table.set_column(0, "timestamp", table.column(0).cast(pa.timestamp("s", tz="UTC")))
    pq.write_table(table, path, compression="zstd", compression_level=9, use_dictionary=["sensor"],
                   column_encoding={"timestamp": "DELTA_BINARY_PACKED"})


def faults_document(demo: DemoSite) -> dict:
    """The content of ``truth/faults.json`` (plain JSON types; instants as UTC ISO 8601)."""
    return {
        "schema": TRUTH_SCHEMA,
        "note": "Invented demo data: the faults planted by the generator (its saved truth).",
        "site": SITE_NAME,
        "timezone": TZ,
        "seed": demo.seed,
        "window": {"first": str(demo.first), "last": str(demo.last),
                   "start": _iso(demo.start), "end": _iso(demo.end)},
        "faults": [
            {"component": f.component, "unit": f.unit, "kind": f.kind, "dates": list(f.dates),
             "start": _iso(f.start), "end": _iso(f.end), "hours": round(f.hours, 4),
             "episodes": [[_iso(a), _iso(b)] for a, b in f.episodes],
             "may_also_show": list(f.may_also_show), "note": f.note,
             **({} if f.kwh is None else {"kwh": f.kwh})}
            for f in demo.faults
        ],
        "data_gaps": [
            {"sensor": r.sensor, "component": r.component, "start": _iso(r.start),
             "end": _iso(r.end), "cause": r.cause}
            for r in demo.gaps.itertuples()
        ],
        "days_off": {str(d): n for d, n in demo.days_off.items()},
        "clean_components": demo.clean_components,
    }


def _readme(demo: DemoSite) -> str:
    kinds = sorted({f.kind for f in demo.faults})
    return "\n".join([
        README_FIRST_LINE,
        "",
        "Nothing in this folder describes a real building, person or product. The building,",
        "its units, sensors, calendars and readings were made up by a seeded generator",
        f"(seed {demo.seed}) to show and test schedcheck. Window: {demo.first} to {demo.last}",
        "(local dates, Europe/Oslo).",
        "",
        "  site.toml              the site file: start here (schedcheck check site.toml)",
        "  calendars/*.ics        occupied hours and night-cooling windows (iCalendar)",
        "  readings/              one-a-minute vibration readings (CSV.gz and Parquet)",
        "  weather/               hourly outdoor temperature of the invented town (CSV)",
        "  bms/trends.csv         the building system's fan command and status trends",
        "  truth/runs.csv         the true run / off / no_data intervals (UTC)",
        "  truth/machine_runs.csv what the machines really did, ignoring data gaps (UTC)",
        "  truth/speeds.csv       the true fan speeds of the variable and two-speed fans (UTC)",
        "  truth/faults.json      the planted faults: " + ", ".join(kinds),
        "  truth/trends.json      the planted trend cases: hand_mode, failed_start, "
        "false_status",
        "",
        "Caution: a real audit informs people who decide; it does not replace them. Keep",
        "ventilation minimums, freeze protection and smoke control in place, never switch off",
        "life-safety sequences, and defer to local codes and licensed practice.",
        "",
    ])


def check_demo_folder(folder: Path) -> None:
    """Refuse a place the demo may not be written to.

    Raises
    ------
    InputError
        When ``folder`` is a file, or a folder that holds anything but an earlier demo.
    """
    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise InputError("exists and is not a folder; choose another place for the demo",
                         path=folder)
    if folder.is_dir() and any(folder.iterdir()):
        readme = folder / "README.txt"
        first = readme.read_text(encoding="utf-8").split("\n", 1)[0] if readme.is_file() else ""
        if first != README_FIRST_LINE:
            raise InputError("the folder is not empty and holds no earlier demo; choose an "
                             "empty or new folder", path=folder)


def write_demo(demo: DemoSite, readings: dict[str, pd.DataFrame], folder: Path) -> list[Path]:
    """Write the demo site into ``folder`` (created if needed); returns the files written.

    Raises
    ------
    InputError
        When ``folder`` is a file, or a folder that holds anything but an earlier demo.
    """
    folder = Path(folder)
    check_demo_folder(folder)
    files: dict[str, bytes] = {"site.toml": demo.site_toml.encode()}
    for name, text in demo.calendars.items():
        files[f"calendars/{name}"] = text.encode()
    for name, frame in readings.items():
        if name.endswith(".csv.gz"):
            files[f"readings/{name}"] = _readings_csv_gz(frame)
    if demo.weather is not None:
        files[WEATHER_FILE] = demo.weather.to_csv(index=False, lineterminator="\n").encode()
    files["truth/runs.csv"] = _runs_csv(observed_truth(demo))
    files["truth/machine_runs.csv"] = _runs_csv(machine_truth(demo))
    files["truth/speeds.csv"] = speeds_csv(demo)
    files["truth/faults.json"] = (json.dumps(faults_document(demo), indent=2) + "\n").encode()
    files[TRENDS_EXPORT] = trend_export(demo).to_csv(index=False, lineterminator="\n").encode()
    files["truth/trends.json"] = (json.dumps(trend_truth(demo), indent=2) + "\n").encode()
    files["README.txt"] = _readme(demo).encode()
    written = []
    path = folder
    try:
        for rel, data in files.items():
            path = folder / rel
            path.parent.mkdir(parents=True, exist_ok=True)
            path.write_bytes(data)
            written.append(path)
        for name, frame in readings.items():
            if name.endswith(".parquet"):
                path = folder / "readings" / name
                path.parent.mkdir(parents=True, exist_ok=True)
                _readings_parquet(frame, path)
                written.append(path)
    except OSError as e:
        raise InputError(f"cannot write the demo here ({e.strerror or e})", path=path) from None
    return sorted(written)


@dataclass
class DemoTruth:
    """The generator's saved truth, read back from ``DIR/truth``.

    ``runs``: component, state (run / off / no_data), start, end (UTC); what an audit should
    recover. ``machine_runs``: the same without data gaps. ``faults``: the records of
    faults.json with ``start``, ``end`` and ``episodes`` as UTC Timestamps. ``gaps``: sensor,
    component, start, end, cause. ``clean``: components with no planted fault. ``speeds``:
    component, start (UTC), speed [-] of the fans whose speed changes (None in a folder
    written before the file existed).
    """

    runs: pd.DataFrame
    machine_runs: pd.DataFrame
    faults: list[dict]
    gaps: pd.DataFrame
    clean: list[str]
    window: tuple[pd.Timestamp, pd.Timestamp]
    document: dict
    #: the planted trend cases of ``truth/trends.json`` (demo/trends.py), [] without the file
    trend_cases: list[dict] = field(default_factory=list)
    speeds: pd.DataFrame | None = None   # component, start (UTC), speed: truth/speeds.csv

    def component_runs(self, component: str, *, observed: bool = True) -> pd.DataFrame:
        """One component's ``start, end, state`` table (covers the window)."""
        t = self.runs if observed else self.machine_runs
        return t[t["component"] == component][["start", "end", "state"]].reset_index(drop=True)

    def faults_of(self, component: str | None = None, kind: str | None = None) -> list[dict]:
        return [f for f in self.faults if (component is None or f["component"] == component)
                and (kind is None or f["kind"] == kind)]


def _read_runs(path: Path) -> pd.DataFrame:
    if not path.is_file():
        raise InputError("is missing; write the demo again with `schedcheck demo`", path=path)
    t = pd.read_csv(path, dtype={"component": str, "state": str})
    for c in ("start", "end"):
        t[c] = pd.to_datetime(t[c], utc=True).dt.as_unit("ns")
    return t


def read_demo_truth(folder: Path) -> DemoTruth:
    """Load ``folder/truth/runs.csv``, ``machine_runs.csv`` and ``faults.json`` back."""
    folder = Path(folder)
    path = folder / "truth" / "faults.json"
    if not path.is_file():
        raise InputError("is missing; write the demo again with `schedcheck demo`", path=path)
    try:
        doc = json.loads(path.read_text(encoding="utf-8"))
    except json.JSONDecodeError as e:
        raise InputError(f"is not valid JSON ({e.msg})", path=path, line=e.lineno) from None

    def ts(text: str) -> pd.Timestamp:
        return pd.Timestamp(text).tz_convert("UTC").as_unit("ns")

    faults = []
    for f in doc["faults"]:
        g = dict(f)
        g["start"], g["end"] = ts(f["start"]), ts(f["end"])
        g["episodes"] = [(ts(a), ts(b)) for a, b in f["episodes"]]
        faults.append(g)
    gaps = pd.DataFrame(doc["data_gaps"], columns=["sensor", "component", "start", "end", "cause"])
    for c in ("start", "end"):
        gaps[c] = pd.to_datetime(gaps[c], utc=True).dt.as_unit("ns")
    trend_doc = folder / "truth" / "trends.json"
    cases = (json.loads(trend_doc.read_text(encoding="utf-8"))["cases"] if trend_doc.is_file()
             else [])
    sp_path = folder / "truth" / "speeds.csv"
    speeds = None
    if sp_path.is_file():
        speeds = pd.read_csv(sp_path, dtype={"component": str})
        speeds["start"] = pd.to_datetime(speeds["start"], utc=True).dt.as_unit("ns")
    return DemoTruth(
        trend_cases=cases,
        speeds=speeds,
        runs=_read_runs(folder / "truth" / "runs.csv"),
        machine_runs=_read_runs(folder / "truth" / "machine_runs.csv"),
        faults=faults, gaps=gaps, clean=list(doc["clean_components"]),
        window=(ts(doc["window"]["start"]), ts(doc["window"]["end"])), document=doc)
