"""Run every benchmark script in this folder (bench_*.py) and print their figures.

Speed and memory are measured here, never in the tests. Usage: ``python benchmarks/run.py``
(or one script: ``python benchmarks/bench_runstate.py``).
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent


def main() -> int:
    status = 0
    for script in sorted(HERE.glob("bench_*.py")):
        print(f"== {script.name}", flush=True)
        rc = subprocess.call([sys.executable, str(script)], cwd=HERE.parent)
        status = status or rc
    return status


if __name__ == "__main__":
    sys.exit(main())
