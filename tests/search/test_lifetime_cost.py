"""lifetime_cost: part cost plus the energy the weighted loss costs over the hours in
service, as an objective the exhaustive search minimises.

Hand calculation: energy = mean power x time (BIPM SI brochure, 9th ed., table 8:
1 kWh = 3.6 MJ), so energy cost = weighted_loss_W x operating_hours / 1000 x price.
"""

from __future__ import annotations

import numpy as np
import pytest

from optimag.search.pareto import nondominated_mask
from optimag.search.run import explore
from tests.search.conftest import write_tiny_study

PRICE, HOURS = 0.30, 40_000.0


def test_lifetime_cost_objective_matches_the_hand_calculation(tmp_path):
    study = write_tiny_study(
        tmp_path, ("volume", "lifetime_cost"),
        extra=f"\n[cost]\nenergy_price_per_kWh = {PRICE}\noperating_hours = {HOURS}\n",
    )
    result = explore(study)
    assert result.front_records
    for record in result.front_records:
        by_hand = record["weighted_loss_W"] * HOURS / 1000.0 * PRICE
        assert record["energy_cost"] == pytest.approx(by_hand, rel=1e-12)
        assert record["lifetime_cost"] == pytest.approx(record["cost"] + by_hand, rel=1e-12)
    # The front is the non-dominated set in (volume, lifetime cost).
    points = np.array([[r["volume_cm3"], r["lifetime_cost"]] for r in result.front_records])
    assert nondominated_mask(points).all()
    assert result.record["objectives"] == ["volume", "lifetime_cost"]


def test_without_price_the_energy_cost_is_zero(tmp_path):
    result = explore(write_tiny_study(tmp_path, ("volume", "cost")))
    record = result.front_records[0]
    assert record["energy_cost"] == 0.0
    assert record["lifetime_cost"] == record["cost"]
