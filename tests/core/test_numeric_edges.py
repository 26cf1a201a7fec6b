"""Numerical edges: results stay finite and accurate across the ranges users meet.

Closed forms (recomputed independently here from CODATA2018 F and R and
IUPAC2021 atomic weights) at the ends of each range: concentrations 1e-12 to
20 mol/L, temperatures -40 to 150 degC, currents 1 uA to 100 kA, masses 1 ug
to 1 kt.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from udfs.core import capacity, faraday, nernst, thermo
from udfs.core.catalogue import couple
from udfs.core.constants import F, R
from udfs.core.formula import molar_mass

CONCENTRATIONS = np.array([1e-12, 1e-9, 1e-6, 1e-3, 1.0, 20.0])
TEMPERATURES = np.array([-40.0, 0.0, 25.0, 80.0, 150.0])


def test_copper_potential_over_concentration_and_temperature_grid() -> None:
    c = CONCENTRATIONS[:, None]
    t = TEMPERATURES[None, :]
    e = nernst.nernst(0.3419, 2, c, 1.0, t)
    assert e.shape == (6, 5)
    assert np.isfinite(e).all()
    expected = 0.3419 + R * (t + 273.15) / (2 * F) * np.log(c)
    np.testing.assert_allclose(e, expected, rtol=0, atol=1e-12)


def test_catalogue_potential_at_extremes_uses_de0dt() -> None:
    c = couple("Zn2+/Zn")
    assert c.de0dt is not None
    for conc in (1e-12, 20.0):
        for temp in (-40.0, 150.0):
            e = float(nernst.potential("Zn2+/Zn", {"Zn2+": conc}, temp))
            t_k = temp + 273.15
            expected = c.e0 + c.de0dt * (t_k - 298.15) + R * t_k / (2 * F) * math.log(conc)
            assert e == pytest.approx(expected, abs=1e-12)


def test_ph_extremes() -> None:
    e = nernst.potential("O2/H2O", {"pH": np.array([-1.0, 0.0, 14.0, 15.0])})
    assert np.isfinite(e).all()
    slope = math.log(10) * R * 298.15 / F
    np.testing.assert_allclose(np.diff(e), -slope * np.array([1, 14, 1]), atol=1e-12)


@pytest.mark.parametrize("current", [1e-6, 1e-3, 1.0, 1e3, 1e5])
def test_faraday_over_currents(current: float) -> None:
    # one hour at `current`: mass = I t M / (n F), closed form
    m = float(faraday.charge_to_mass(current * 1.0, molar_mass("Cu"), 2))
    assert m == pytest.approx(current * 3600 * 63.546 / (2 * F), rel=1e-12)
    hours = float(faraday.deposition_time(m, current, molar_mass("Cu"), 2))
    assert hours == pytest.approx(1.0, rel=1e-12)


@pytest.mark.parametrize("mass_g", [1e-6, 1e-3, 1.0, 1e6, 1e9])
def test_faraday_over_masses(mass_g: float) -> None:
    ah = float(faraday.mass_to_charge(mass_g, molar_mass("Ni"), 2))
    assert ah == pytest.approx(mass_g * 2 * F / (58.6934 * 3600), rel=1e-9)
    assert math.isfinite(ah)


def test_capacity_over_masses() -> None:
    masses = np.array([1e-6, 1.0, 1e9])
    ah = capacity.capacity(masses, 170.0)
    np.testing.assert_allclose(ah, masses * 0.17, rtol=1e-15)


def test_heat_rate_over_currents_and_temperatures() -> None:
    i = np.array([1e-6, 1.0, 1e5])[:, None]
    t = TEMPERATURES[None, :]
    q = thermo.heat_rate(i, 3.7, 3.6, -0.2, t)
    expected = i * 0.1 + i * (t + 273.15) * 0.2e-3
    np.testing.assert_allclose(q, expected, rtol=1e-12)


def test_series_parallel_huge_and_tiny() -> None:
    s, p, cells, wh = capacity.series_parallel(1500.0, 1e9, 3.2, 300.0)
    assert (float(s), float(p)) == (469.0, math.ceil(1e9 / (469 * 3.2 * 300)))
    assert float(cells) == float(s) * float(p)
    assert np.isfinite(wh)
