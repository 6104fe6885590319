import pandas as pd
import pytest

from schedcheck.durations import format_duration, parse_duration


@pytest.mark.parametrize(
    "text, minutes",
    [
        ("90min", 90),
        ("2h", 120),
        ("1h30min", 90),
        ("PT2H", 120),
        ("PT1H30M", 90),
        ("45s", 0.75),
        ("1d", 1440),
        ("0min", 0),
        (30, 30),
        ("  2h ", 120),
        ("P1D", 1440),
    ],
)
def test_accepted_forms(text, minutes):
    assert parse_duration(text) == pd.Timedelta(minutes=minutes)


@pytest.mark.parametrize("text", ["", "abc", "2x", "P", "PT", "-5min", -1, True, None, "1h-30min"])
def test_refused_forms_say_what_is_accepted(text):
    with pytest.raises(ValueError, match="duration"):
        parse_duration(text)


def test_format_round_trips():
    for text in ["2h", "1h30min", "45s", "0min"]:
        assert format_duration(parse_duration(text)) == text
