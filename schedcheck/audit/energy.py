"""Fan energy: electrical power by the fan affinity laws, and kWh, cost and CO2.

The fan affinity laws (fan laws) relate a fan's operating points at two speeds on the same
system curve: flow is proportional to speed, pressure to speed squared and shaft power to speed
cubed, ``P2 / P1 = (n2 / n1) ** 3``. With the design (full-speed) electrical input ``power_kw``
and a running speed fraction ``s`` this gives

    P(s) = power_kw * s ** exponent

with ``exponent = 3`` by default.

Assumptions and uncertainty (also in docs/outputs.md):

* The cube law holds for a fixed system curve through the origin (no fixed pressure set point),
  constant air density and constant fan, belt, motor and drive efficiency. Source for the cube
  law: U.S. Department of Energy, Advanced Manufacturing Office, Motor Systems Tip Sheet #11
  "Adjustable Speed Drive Part-Load Efficiency" (input power varies as the cube of speed for
  fans with no static lift; 20 % less speed needs about 50 % less power), checked in
  tests/test_energy.py.
* Variable-air-volume systems controlled to a duct static-pressure set point do not follow a
  cube: the set point keeps pressure up at low flow, so the effective exponent is lower, about 2
  to 2.5 in field studies (from memory, no single source). Drive and motor losses also grow in
  relative terms at low speed. Set ``[energy] exponent`` to such a value when it fits the plant.
* The result is an estimate of electrical input while running at the usual speed; it is not a
  meter reading. A measured input power at the usual speed is better than any exponent: set
  ``speed = 1.0`` and ``power_kw`` to the measured kW.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from schedcheck.site import EnergySettings

#: Affinity-law exponent of power against speed. Source: the fan laws, power ~ speed cubed
#: (U.S. DOE Motor Systems Tip Sheet #11; see the module docstring). Defined once, as the
#: site file's default.
DEFAULT_EXPONENT = EnergySettings.exponent

#: Accepted exponents, inclusive [-]. The exponent is 3 in theory; measured fan systems fall
#: between about 1.5 (a VAV system holding static pressure) and 3.5 (common practice, no source).
#: The site file's validator and :func:`affinity_power` both use this one range.
EXPONENT_RANGE = (1.5, 3.5)


def affinity_power(power_kw, speed, exponent: float = DEFAULT_EXPONENT):
    """Electrical input power of a fan at a fraction of its design speed (fan affinity law).

    Parameters
    ----------
    power_kw : float or array_like
        Electrical input at design (full) speed [kW]; not negative.
    speed : float or array_like
        Running speed as a fraction of design speed [-]; not negative (above 1 is allowed).
    exponent : float
        Exponent of power against speed [-]; 3 for the cube law, lower for fans under
        static-pressure control; inside :data:`EXPONENT_RANGE`.

    Returns
    -------
    float or ndarray
        ``power_kw * speed ** exponent`` [kW].

    Notes
    -----
    Third fan law, ``P2 / P1 = (n2 / n1) ** 3``, applied from the design point ``(1, power_kw)``.
    """
    p = np.asarray(power_kw, dtype=float)
    s = np.asarray(speed, dtype=float)
    if np.any(~np.isfinite(p)) or np.any(p < 0):
        raise ValueError(f"power_kw must be a finite number >= 0, got {power_kw!r}")
    if np.any(~np.isfinite(s)) or np.any(s < 0):
        raise ValueError(f"speed must be a finite fraction >= 0, got {speed!r}")
    lo, hi = EXPONENT_RANGE
    if not (np.isfinite(exponent) and lo <= exponent <= hi):
        raise ValueError(f"exponent must be between {lo:g} and {hi:g}, got {exponent!r}")
    out = p * s**exponent
    return float(out) if out.ndim == 0 else out


def energy_kwh(power_kw, hours):
    """Energy of running at a constant power for a time: ``power_kw * hours`` [kWh]."""
    return np.asarray(power_kw, dtype=float) * np.asarray(hours, dtype=float)


@dataclass(frozen=True)
class Priced:
    """Energy with its cost and emissions (floats, or arrays of one entry per item)."""

    kwh: float | np.ndarray        # [kWh]
    cost: float | np.ndarray       # [currency]
    co2_kg: float | np.ndarray     # [kg CO2e]


def price(kwh, price_per_kwh: float, co2_per_kwh: float) -> Priced:
    """Cost and CO2 of amounts of energy: the audit's one pricing step, vectorised.

    Parameters
    ----------
    kwh : float or array_like
        Energy [kWh]; one entry per item priced (components, days, findings).
    price_per_kwh : float
        Energy price [currency/kWh].
    co2_per_kwh : float
        Emission factor [kg CO2e/kWh].

    Returns
    -------
    Priced
        ``kwh``, ``cost = kwh * price_per_kwh`` and ``co2_kg = kwh * co2_per_kwh``; floats for
        a scalar ``kwh``, arrays otherwise.
    """
    e = np.asarray(kwh, dtype=float)
    cost, co2 = e * float(price_per_kwh), e * float(co2_per_kwh)
    if e.ndim == 0:
        return Priced(kwh=float(e), cost=float(cost), co2_kg=float(co2))
    return Priced(kwh=e, cost=cost, co2_kg=co2)
