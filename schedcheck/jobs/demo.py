"""The demo job: build the fictional site in memory and write it to a folder (``schedcheck demo``).

Prints nothing; the CLI renders the result and then checks (and, once every piece is present,
audits) the site it wrote.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from schedcheck.demo.build import DEFAULT_MONTHS, DEFAULT_SEED, DemoSite, build_demo, demo_readings


@dataclass
class DemoResult:
    """What :func:`make_demo` wrote: the folder, the files, the site file and the demo itself."""

    folder: Path
    files: list[Path]
    site_file: Path
    demo: DemoSite
    readings_rows: int
    #: (component key, fault kind) -> the fault's hours by the audit's definitions [h]
    audited_hours: dict[tuple[str, str], float] = field(default_factory=dict)

    @property
    def size_bytes(self) -> int:
        return sum(p.stat().st_size for p in self.files)


def make_demo(folder: str | Path = "schedcheck-demo", seed: int = DEFAULT_SEED,
              months: int = DEFAULT_MONTHS) -> DemoResult:
    """Write the fictional demo site into ``folder``.

    Parameters
    ----------
    folder : str or Path
        Where to write; created if needed. An existing folder must be empty or hold an earlier
        demo (which is overwritten).
    seed : int
        Seed of the generator; the same seed and months give identical files.
    months : int
        Length of the window in months (1 to 12); 3 or more holds every planted fault.

    Returns
    -------
    DemoResult
    """
    from schedcheck.outputs.demo_files import check_demo_folder, write_demo
    from schedcheck.outputs.folder import output_folder

    folder = Path(folder)
    check_demo_folder(folder)
    demo = build_demo(seed=seed, months=months)
    readings = demo_readings(demo)
    with output_folder(folder, complete="site.toml") as stage:
        staged = write_demo(demo, readings, stage.path)
    files = sorted(folder / p.relative_to(stage.path) for p in staged)
    return DemoResult(folder=folder, files=files, site_file=folder / "site.toml", demo=demo,
                      readings_rows=sum(len(f) for f in readings.values()),
                      audited_hours=audited_fault_hours(folder / "site.toml", demo))


def audited_fault_hours(site_file: Path, demo: DemoSite) -> dict[tuple[str, str], float]:
    """Each planted fault's hours as the audit counts them, from the site's own schedule."""
    from schedcheck.demo.truth import fault_hours_as_audited
    from schedcheck.inputs.site_file import load_site
    from schedcheck.jobs.schedule import unit_schedules

    site = load_site(site_file)
    schedules = unit_schedules(site, demo.first, demo.last)
    return {(f.component, f.kind): fault_hours_as_audited(
                f.kind, f.episodes, schedules[f.unit].intervals) for f in demo.faults}
