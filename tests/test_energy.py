"""Fan energy by the affinity laws, checked against published statements and examples."""

import math

import numpy as np
import pytest

from schedcheck.energy import DEFAULT_EXPONENT, affinity_power, energy_kwh, price


def test_default_exponent_is_the_cube_law():
    assert DEFAULT_EXPONENT == 3.0


def test_twenty_percent_less_speed_needs_about_half_the_power():
    # Validation: the common statement that running a fan 20% slower needs about half the
    # power, 0.8^3 = 0.512 (stated e.g. in the U.S. DOE fan-system sourcebook "Improving Fan
    # System Performance", from memory; also https://aerotech-fans.vercel.app/blogsInfo/5).
    assert affinity_power(1.0, 0.8) == pytest.approx(0.512, abs=1e-12)


def test_ten_percent_less_speed_cuts_power_by_27_percent():
    # Validation: "A small 10% speed reduction cuts power by 27%"
    # (https://theprimecalculator.com/.../fan-affinity-calculator/formula): 0.9^3 = 0.729.
    assert 1 - affinity_power(10.0, 0.9) / 10.0 == pytest.approx(0.27, abs=0.001)


def test_published_worked_example_1200_to_1500_rpm():
    # Validation: worked example at https://theprimecalculator.com (fan affinity calculator,
    # formula page): a fan at 1200 RPM uses 5 HP; at 1500 RPM it needs 5 * 1.25^3 = 9.77 HP.
    # Power units do not matter to the ratio, so the design point is 1200 RPM = 5 units.
    assert affinity_power(5.0, 1500 / 1200) == pytest.approx(9.77, abs=0.005)


def test_lower_exponent_for_static_pressure_control_gives_more_power_at_part_speed():
    full = 7.5
    assert affinity_power(full, 0.6, 2.0) > affinity_power(full, 0.6, 3.0)
    assert affinity_power(full, 0.6, 2.0) == pytest.approx(7.5 * 0.36)


def test_full_speed_is_design_power_and_zero_speed_is_zero():
    assert affinity_power(7.5, 1.0) == 7.5
    assert affinity_power(7.5, 0.0) == 0.0


def test_arrays_are_accepted():
    out = affinity_power(np.array([1.0, 2.0]), np.array([0.5, 1.0]))
    np.testing.assert_allclose(out, [0.125, 2.0])


@pytest.mark.parametrize(
    ("power", "speed", "exponent"),
    [(-1.0, 0.5, 3.0), (1.0, -0.1, 3.0), (math.nan, 0.5, 3.0), (1.0, 0.5, 0.5), (1.0, 0.5, 5.0)],
)
def test_bad_values_are_refused(power, speed, exponent):
    with pytest.raises(ValueError):
        affinity_power(power, speed, exponent)


def test_energy_cost_and_co2():
    kwh = float(energy_kwh(affinity_power(7.5, 0.8), 10.0))
    assert kwh == pytest.approx(38.4)
    p = price(kwh, 1.2, 0.017)
    assert p.cost == pytest.approx(46.08)
    assert p.co2_kg == pytest.approx(0.6528)
