"""Shared fixtures.

The demo site is built once per session: ``demo_site`` in memory (default length),
``demo_audit`` that same site written to disk and audited once, and ``demo_month`` a one-month
demo written to disk (small and quick). Tests must not change what these fixtures return.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import pytest


@dataclass(frozen=True)
class DemoAudit:
    """The default demo written to ``folder`` (site file ``site_file``) and audited once."""

    folder: Path
    site_file: Path
    demo: object      # schedcheck.demo.build.DemoSite
    result: object    # what schedcheck.jobs.audit.audit_site returned


@pytest.fixture(scope="session")
def demo_site():
    """The default demo site, built in memory once for the whole session."""
    from schedcheck.demo.build import build_demo

    return build_demo()


@pytest.fixture(scope="session")
def demo_audit(demo_site, tmp_path_factory) -> DemoAudit:
    """``demo_site`` written to disk (as ``schedcheck demo`` writes it) and audited once."""
    from schedcheck.demo.build import demo_readings
    from schedcheck.jobs.audit import audit_site
    from schedcheck.outputs.demo_files import write_demo

    folder = tmp_path_factory.mktemp("demo")
    write_demo(demo_site, demo_readings(demo_site), folder / "site")
    result = audit_site(folder / "site" / "site.toml", out=folder / "audit")
    return DemoAudit(folder=folder / "site", site_file=folder / "site" / "site.toml",
                     demo=demo_site, result=result)


@pytest.fixture(scope="session")
def demo_month(tmp_path_factory):
    """A one-month demo written to disk once (``make_demo(months=1)``)."""
    from schedcheck.jobs.demo import make_demo

    return make_demo(tmp_path_factory.mktemp("demo_month") / "d", months=1)


@pytest.fixture(scope="module")
def chromium():
    """Path of headless Chromium for the browser tests; a failure under CI, a skip elsewhere."""
    import os

    from tests.chromium_cdp import chromium_path

    path = chromium_path()
    if path is None:
        if os.environ.get("CI"):
            pytest.fail("CI is set but /usr/bin/chromium is missing (.ci/run installs it)")
        pytest.skip("headless Chromium is not installed (apt-get install chromium)")
    return path
