"""The capacity basis (udfs.core.electrode_balance): first-charge areal
capacities, N/P on that basis, the reversible capacity after both electrodes'
first-cycle losses. Inputs are round numbers for hand arithmetic; the catalogue
rows used at the end carry their own sources (data/active_materials.csv)."""

from __future__ import annotations

import numpy as np
import pytest

from udfs.core import catalogue
from udfs.core.electrode_balance import (
    anode_limited,
    areal_capacity,
    first_charge,
    loading_for,
    reversible_areal_capacity,
)


def test_areal_capacity_and_its_inverse() -> None:
    # 20 mg/cm2 x 0.95 x 200 mAh/g / 1000 = 3.8 mAh/cm2 (hand arithmetic)
    assert float(areal_capacity(20.0, 0.95, 200.0)) == pytest.approx(3.8, rel=1e-15)
    assert float(loading_for(3.8, 0.95, 200.0)) == pytest.approx(20.0, rel=1e-15)


@pytest.mark.parametrize(
    ("qc", "qa", "eta_c", "eta_a", "want", "anode"),
    [
        # N/P 1.1: cathode 4 * 0.9 = 3.6; lithium 4 - 4.4 * 0.07 = 3.692 -> 3.6 (cathode)
        (4.0, 4.4, 0.9, 0.93, 3.6, False),
        # a lossy anode: cathode 4 * 0.95 = 3.8; lithium 4 - 4.4 * 0.10 = 3.56 -> 3.56 (anode)
        (4.0, 4.4, 0.95, 0.90, 3.56, True),
        # N/P 0.8: the first charge stops at 3.2; 3.2 - 3.2 * 0.07 = 2.976 (anode)
        (4.0, 3.2, 0.9, 0.93, 2.976, True),
        # N/P 1 with no losses: the whole first charge comes back
        (4.0, 4.0, 1.0, 1.0, 4.0, False),
    ],
)
def test_reversible_capacity_by_hand(qc: float, qa: float, eta_c: float, eta_a: float,
                                     want: float, anode: bool) -> None:
    assert float(reversible_areal_capacity(qc, qa, eta_c, eta_a)) == pytest.approx(want,
                                                                                   rel=1e-12)
    assert bool(anode_limited(qc, qa, eta_c, eta_a)) is anode


def test_below_np_one_the_capacity_is_the_anodes() -> None:
    # below N/P 1 the first charge stops at Qa and the cell holds Qa * eta_a unless the
    # cathode's own efficiency is lower still: min(Qa * eta_a, Qc * eta_c)
    qc = 4.0
    nps = np.linspace(0.3, 0.99, 50)
    qa = nps * qc
    got = reversible_areal_capacity(qc, qa, 0.9, 0.93)
    np.testing.assert_allclose(got, np.minimum(qa * 0.93, qc * 0.9), rtol=1e-14)
    np.testing.assert_array_equal(anode_limited(qc, qa, 0.9, 0.93), qa * 0.93 < qc * 0.9)
    # with a loss-free cathode every N/P below 1 is anode-limited
    assert np.all(anode_limited(qc, qa, 1.0, 0.93))
    np.testing.assert_array_equal(first_charge(qc, qa), qa)


def test_capacity_never_exceeds_either_electrode() -> None:
    rng = np.random.default_rng(3)
    qc = rng.uniform(1, 6, 1000)
    qa = qc * rng.uniform(0.5, 1.5, 1000)
    ec, ea = rng.uniform(0.7, 1.0, 1000), rng.uniform(0.7, 1.0, 1000)
    q = reversible_areal_capacity(qc, qa, ec, ea)
    assert np.all(q <= qc * ec + 1e-12) and np.all(q <= qa * ea + 1e-12)


def test_catalogue_graphite_against_nmc811() -> None:
    # data/: NMC811 225 mAh/g x 0.89 on first charge; graphite FCE 0.93. At N/P 1.1 the
    # cathode's 0.89 limits: Qrev / Qc = min(0.89, 1 - 1.1 * 0.07 = 0.923) = 0.89
    nmc, gr = catalogue.cycling("NMC811"), catalogue.cycling("graphite")
    qc = float(areal_capacity(22.0, 0.96, nmc.first_charge_capacity))
    q = float(reversible_areal_capacity(qc, 1.1 * qc, nmc.first_cycle_efficiency,
                                        gr.first_cycle_efficiency))
    assert q / qc == pytest.approx(min(0.89, 1 - 1.1 * 0.07), rel=1e-12)
