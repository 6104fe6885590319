"""outputs.wording: the report's headline names only the kinds of component present."""

import json

from schedcheck.outputs.files import write_audit_files
from schedcheck.outputs.report import write_report
from schedcheck.outputs.wording import monitored_words
from tests.outputs.test_outputs_files import result  # noqa: F401 - the fixture


def test_monitored_words_lists_only_what_is_there():
    assert monitored_words(["supply_fan", "exhaust_fan"]) == "fans"
    assert monitored_words(["supply_fan", "heat_wheel"]) == "fans and heat wheels"
    assert monitored_words(["heat_wheel"]) == "heat wheels"
    assert monitored_words(["other", "heat_wheel", "return_fan"]) == (
        "fans, heat wheels and other monitored parts")
    assert monitored_words([]) == "components"


def test_headline_of_a_site_without_wheels_says_fans(result, tmp_path):  # noqa: F811
    write_audit_files(result, tmp_path)
    html = write_report(tmp_path).read_text()
    assert "the monitored fans and heat wheels ran" in html
    path = tmp_path / "summary.json"
    s = json.loads(path.read_text())
    for c in s["components"]:
        c["role"] = "exhaust_fan" if c["role"] == "heat_wheel" else c["role"]
    path.write_text(json.dumps(s))
    html = write_report(tmp_path).read_text()
    assert "the monitored fans ran" in html and "wheel" not in html.split("monitored", 1)[1][:40]


def test_one_separation_figure_in_states_summary_and_report():
    from types import SimpleNamespace as NS

    from schedcheck.outputs.files import _threshold
    from schedcheck.outputs.report import _ENV
    from schedcheck.outputs.wording import separation_figure, separation_text
    from schedcheck.runstate.onofflevel import SEPARATION_CAP

    for raw, figure, text in ((2.7934, 2.8, "2.8"), (5e6, SEPARATION_CAP, ">1000"),
                              (None, None, "-")):
        assert separation_figure(raw, SEPARATION_CAP) == figure
        assert separation_text(raw, SEPARATION_CAP) == text           # states table
        comp = NS(threshold={"separation": raw}, state_warnings=())
        assert _threshold(comp)["separation"] == figure                # summary.json
        assert _ENV.filters["separation"](figure) == text              # report, from summary
