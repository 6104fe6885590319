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


@pytest.mark.parametrize("text", [1e300, "999999999D", "PT99999999999999H"])
def test_beyond_the_range_of_a_duration_is_a_plain_message(text):
    # pandas said "Cannot construct Timedelta from {'minutes': 1e+300}" or printed its fields
    with pytest.raises(ValueError) as exc:
        parse_duration(text)
    assert str(exc.value) == f"{text!r} is too long for a duration"
