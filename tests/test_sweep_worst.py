"""rule_grid keeps each rule's worst fired cell (the largest excess over the threshold, an
infinite one counted as 1e300, the first of equals); a chunk whose largest excess, found
from its most extreme fired indicator in one pass, is no larger than the worst so far is
not searched.  That largest excess must be the one the cell-by-cell search finds: IEEE 754
subtraction is monotonic, so the excess of the extreme indicator is the extreme excess."""

import numpy as np
import pytest

from checker.engine.regime import evaluate, rulebook, sweep
from checker.records import replace

RNG = np.random.default_rng(20261203)


def _ruled(relation, threshold, indicator, fired):
    (rule,) = [r for r in rulebook.load_rules() if r.id == "ION01"]
    rule = replace(rule, relation=relation, threshold=threshold)
    empty = np.zeros(0, dtype=np.int64)
    return evaluate.Ruled(rule, "n", {}, fired, indicator, [], empty)


def _searched(ruled):
    """The excess of the worst fired cell, as rule_grid searches it cell by cell."""
    fired = np.flatnonzero(ruled.fired)
    with np.errstate(all="ignore"):
        excess = np.asarray(evaluate.beyond(ruled.rule, ruled.indicator[fired]), dtype=float)
    return float(np.max(np.minimum(excess, 1e300)))


@pytest.mark.parametrize("relation", ["above", "below"])
@pytest.mark.parametrize("scale", [1e-3, 1.0, 1e20, 1e305])
def test_the_largest_excess_is_the_searched_one(relation, scale):
    for _ in range(20):
        threshold = float(RNG.choice([0.95, 1.05, -3.0, 0.01]))
        indicator = threshold + RNG.normal(0.0, scale, 4096)
        indicator[RNG.integers(0, 4096, 20)] = np.nan
        if scale > 1e300:  # overflowing excesses, and infinite indicators
            indicator[RNG.integers(0, 4096, 5)] = np.inf if relation == "above" else -np.inf
        with np.errstate(invalid="ignore"):
            wrong = indicator > threshold if relation == "above" else indicator < threshold
        fired = wrong & (RNG.random(4096) < 0.3)
        if not fired.any():
            continue
        ruled = _ruled(relation, threshold, indicator, fired)
        assert sweep._largest_excess(ruled) == _searched(ruled)


def test_a_one_value_indicator_of_a_chunk():
    """A chunk's indicator may be a read-only view of one value."""
    indicator = np.broadcast_to(np.float64(1.3), (1000,))
    fired = np.zeros(1000, dtype=bool)
    fired[500:] = True
    ruled = _ruled("above", 1.05, indicator, fired)
    assert sweep._largest_excess(ruled) == _searched(ruled) == 1.3 - 1.05
