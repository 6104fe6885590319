"""Benchmark of the evidence pack: one year, three units (three components each).

Writes an invented year of audit files (the test fixture generator, with random short data
gaps so runs.csv is as fragmented as real data), then measures reading them back, rendering
report.html (time, peak Python memory, size) and, when headless Chromium is installed, how
long the page takes to open and how many A4 pages it prints to.

Targets (the report's issue): opens in under a second in the browser, under 2 MB.
Usage: python benchmarks/bench_report.py
"""

from __future__ import annotations

import datetime as dt
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "tests"))  # the fixture generator and Chromium client

from chromium_cdp import Browser, chromium_path, pdf_pages  # noqa: E402
from report_fixture import write_fixture  # noqa: E402

from schedcheck.outputs.report import render_report  # noqa: E402
from schedcheck.outputs.saved import read_saved_audit  # noqa: E402

UNITS = [(f"AHU-{i}", f"Wing {i}", [("supply", "supply_fan", f"S-{i}01", 7.5),
                                    ("exhaust", "exhaust_fan", f"S-{i}02", 5.5),
                                    ("wheel", "heat_wheel", f"S-{i}03", 0.37)])
         for i in (1, 2, 3)]
A4_IN = (210 / 25.4, 297 / 25.4)


def main() -> int:
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "audit"
        t = time.perf_counter()
        write_fixture(out, first=dt.date(2026, 1, 1), days=365, units=UNITS, gaps_per_day=3)
        print(f"fixture (not measured): {time.perf_counter() - t:.1f} s")
        runs_rows = sum(1 for _ in open(out / "runs.csv")) - 1
        find_rows = sum(1 for _ in open(out / "findings.csv")) - 1
        print(f"input: 365 days, 3 units, 9 components, {runs_rows} runs rows, "
              f"{find_rows} findings")

        t = time.perf_counter()
        data = read_saved_audit(out)
        t_read = time.perf_counter() - t
        times = []
        for _ in range(3):  # the first includes compiling the template
            t = time.perf_counter()
            html = render_report(data)
            times.append(time.perf_counter() - t)
        tracemalloc.start()  # separately: tracing slows Python down several times
        render_report(data)
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
        report = out / "report.html"
        report.write_text(html, encoding="utf-8")
        size = report.stat().st_size
        print(f"read saved files: {t_read * 1000:.0f} ms")
        print(f"render report.html: first {times[0] * 1000:.0f} ms, best "
              f"{min(times) * 1000:.0f} ms; peak Python memory {peak / 2**20:.1f} MiB")
        print(f"report.html size: {size / 1e6:.2f} MB (target < 2 MB): "
              f"{'ok' if size < 2e6 else 'OVER'}")

        if chromium_path() is None:
            print("browser: chromium not installed, open time not measured")
            return 0
        with Browser(Path(tmp) / "profile") as browser:
            loads = []
            for _ in range(3):
                loads.append(browser.open(report.as_uri()))
            fcp = browser.call("Runtime.evaluate", {"expression": (
                "(performance.getEntriesByName('first-contentful-paint')[0] || {}).startTime"),
                "returnByValue": True})["result"].get("value")
            problems = browser.problems()
            pages = pdf_pages(browser.print_pdf(A4_IN))
        best = min(loads)
        print(f"browser open (load event), best of 3: {best:.0f} ms, all: "
              f"{', '.join(f'{v:.0f}' for v in loads)} ms (target < 1000 ms): "
              f"{'ok' if best < 1000 else 'OVER'}")
        if fcp is not None:
            print(f"first contentful paint: {fcp:.0f} ms")
        print(f"console errors / network requests: {len(problems)}; A4 pages: {pages}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
