"""Shared helpers for the tests.  References are computed here with mpmath or
taken from published tables; never from the code under test."""

import mpmath as mp
import pytest

PER_CM3 = 1e6


def pytest_configure(config):
    # still run by default (the CI command is plain `python -m pytest`); `-m "not slow"`
    # leaves them out for a quick local run
    config.addinivalue_line(
        "markers", "slow: recomputes mpmath references (seconds); run by default"
    )


@pytest.fixture(scope="session")
def schema_generator():
    """tools/generate_schema.py as a module: the staleness tests compare the shipped
    schemas with what it renders from the key tables."""
    import sys
    from pathlib import Path

    sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tools"))
    try:
        import generate_schema
    finally:
        sys.path.pop(0)
    return generate_schema


def fd_reference(j, eta, dps=22):
    """Normalized F_j(eta) from mpmath (DLMF 25.12.16: -Li_{j+1}(-e^eta))."""
    with mp.workdps(dps):
        eta = mp.mpf(eta)
        if j == 0:
            return mp.log1p(mp.exp(eta))
        if j == -1:
            return 1 / (1 + mp.exp(-eta))
        if abs(eta) <= 2 and j != int(j):
            return _taylor_at_zero(j, eta)
        return -mp.re(mp.polylog(mp.mpf(j) + 1, -mp.exp(eta)))


_TAYLOR = {}


def _taylor_at_zero(j, eta):
    """F_j(eta) = sum_k eta^k/k! F_{j-k}(0), F_m(0) = Dirichlet eta(m+1) (radius pi).

    A second, independent route to F_j near eta = 0, where mpmath's polylog
    is slow; the derivative rule dF_j/deta = F_{j-1} gives the coefficients.
    """
    if j not in _TAYLOR:
        _TAYLOR[j] = [mp.altzeta(mp.mpf(j) + 1 - k) / mp.factorial(k) for k in range(140)]
    return mp.polyval(_TAYLOR[j][::-1], eta)


@pytest.fixture(scope="session")
def silicon():
    from checker import load_material

    return load_material("Si")


@pytest.fixture(autouse=True)
def _no_cache_setting_from_the_caller(monkeypatch):
    """Tests choose their cache folder through XDG_CACHE_HOME; a REGIMECHECK_CACHE in the
    caller's environment would override it."""
    monkeypatch.delenv("REGIMECHECK_CACHE", raising=False)
