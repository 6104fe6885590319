"""The command line imports only what a command needs: ``schedcheck --help`` loads no numeric
library, no template engine and no demo generator (the speed itself is measured by
benchmarks/bench_scale.py, not here)."""

import subprocess
import sys

HEAVY = ("pandas", "numpy", "scipy", "jinja2", "pyarrow", "schedcheck.demo.build",
         "schedcheck.outputs.report", "dask", "distributed")


def test_help_imports_no_heavy_module():
    code = ("import sys; from schedcheck.cli import main; rc = main(['--help']); "
            f"print('loaded:' + ','.join(m for m in {HEAVY!r} if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout.splitlines()
    assert "Usage" in "\n".join(out)
    assert out[-1] == "loaded:", f"--help imported {out[-1]}"
