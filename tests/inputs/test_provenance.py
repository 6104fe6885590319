"""Provenance: input files with sizes and SHA-256, read in chunks, and the settings in force."""

from __future__ import annotations

import hashlib

import pytest

from schedcheck.inputs.provenance import sha256_file


@pytest.mark.validation
def test_sha256_matches_the_published_example(tmp_path):
    # FIPS 180-2, Appendix B.1: SHA-256("abc")
    path = tmp_path / "abc.txt"
    path.write_bytes(b"abc")
    assert sha256_file(path) == (
        3, "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad")


def test_chunked_hash_equals_the_whole_file_hash(tmp_path):
    data = bytes(range(256)) * 5000          # 1.28 MB: several chunks of 64 KiB
    path = tmp_path / "big.bin"
    path.write_bytes(data)
    assert sha256_file(path, chunk=65536) == (len(data), hashlib.sha256(data).hexdigest())


def test_demo_audit_records_every_input_file(demo_audit):
    import json

    summary = json.loads((demo_audit.result.outdir / "summary.json").read_text("utf-8"))
    prov = summary["provenance"]
    assert prov["version"] == summary["tool_version"]
    roles = [i["role"] for i in prov["inputs"]]
    assert roles[0] == "site" and "occupied" in roles and "readings" in roles
    for item in prov["inputs"]:
        path = demo_audit.folder / item["path"]
        assert path.stat().st_size == item["bytes"]
        assert hashlib.sha256(path.read_bytes()).hexdigest() == item["sha256"]
    settings = prov["settings"]
    site = demo_audit.result.site
    gap_min = int(site.readings.max_gap.total_seconds() // 60)
    assert settings["readings"]["max_gap"] == f"{gap_min}min"
    assert set(settings["units"]) == {u.id for u in site.units}
    assert settings["energy"]["price"] == site.energy.price
