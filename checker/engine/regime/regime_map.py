"""The doping–temperature plane of one material and dopant, divided into regimes, and
η of the majority carrier along temperature at one doping (the plots draw both).

Every grid point is solved with the equilibrium solver (one vectorized call) and
classified by :func:`checker.physics.carriers.regime_code`; the criteria behind
the classes (η of the majority carrier, the ionized fraction, n_i over the net
doping, the Mott density) are kept so that the map can draw them as contours.
The operating points of checked calculations are placed on the plane.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Protocol

import numpy as np
import numpy.typing as npt

from ...inputs.calculation_file import AxisKey
from ...physics import carriers, equilibrium
from ...physics.arrays import ArrayIn, FloatArray
from ...physics.materials import Material
from ...vocabulary_words import SEVERITY_RANK

if TYPE_CHECKING:
    from ...inputs.calculation_file import Calculation
    from .points import CalculationReport

DOPING_RANGE = (1e13 * 1e6, 1e21 * 1e6)  # m^-3
TEMPERATURE_RANGE = (20.0, 700.0)  # K


@dataclass
class RegimeGrid:
    material: Material
    species: str
    kind: str  # "donor" | "acceptor"
    doping: FloatArray  # m^-3, the x axis (log spaced)
    T: FloatArray  # K, the y axis
    codes: npt.NDArray[np.int8]  # (len(T), len(doping)) index into REGIMES
    eta: FloatArray  # η of the majority carrier
    fraction: FloatArray  # ionized fraction of the dopant
    ni_ratio: FloatArray  # n_i / N
    mott: float  # m^-3 (inf where the dopant has none)

    @property
    def carrier(self) -> str:
        """The majority carrier the dopant gives: "n" or "p"."""
        return _CARRIER[self.kind]


@dataclass
class EtaCurve:
    material: Material
    species: str
    kind: str  # "donor" | "acceptor"
    density: float  # m^-3
    T: FloatArray  # K
    eta: FloatArray  # η of the majority carrier
    codes: npt.NDArray[np.int8]  # index into REGIMES per temperature

    @property
    def carrier(self) -> str:
        return _CARRIER[self.kind]


_CARRIER = {"donor": "n", "acceptor": "p"}


class CheckedReports(Protocol):
    """What the map reads of a run (engine.run.RunResult, or one report of it)."""

    @property
    def reports(self) -> Sequence[CalculationReport]: ...


@dataclass
class MapPoint:
    label: str
    doping: float  # m^-3 (net, of the map's dopant type)
    T: float
    severity: str | None  # worst active finding
    # a sweep: (doping from, to) and (T from, to); equal ends for a missing axis
    doping_span: tuple[float, ...] = ()
    T_span: tuple[float, ...] = ()


def regime_grid(
    material: Material,
    species: str,
    doping_range: tuple[float, float] = DOPING_RANGE,
    temperature_range: tuple[float, float] = TEMPERATURE_RANGE,
    size: tuple[int, int] = (200, 200),
) -> RegimeGrid:
    """Solve the plane on ``size`` = (doping points, temperature points)."""
    dopant = material.dopant(species)
    doping = np.geomspace(*doping_range, size[0])
    T = np.linspace(*temperature_range, size[1])
    N, TT = np.meshgrid(doping, T)
    donors = {species: N.ravel()} if dopant.kind == "donor" else {}
    acceptors = {species: N.ravel()} if dopant.kind == "acceptor" else {}
    state = equilibrium.solve(material, TT.ravel(), donors, acceptors)
    shape = N.shape
    eta = state.eta_n if dopant.kind == "donor" else state.eta_p
    fraction = state.donor_fraction if dopant.kind == "donor" else state.acceptor_fraction
    return RegimeGrid(
        material,
        species,
        dopant.kind,
        doping,
        T,
        carriers.regime_code(state).reshape(shape),
        np.asarray(eta).reshape(shape),
        np.asarray(fraction).reshape(shape),
        (np.asarray(state.ni) / N.ravel()).reshape(shape),
        float(dopant.mott_density),
    )


def eta_curve(material: Material, species: str, density: float, temperatures: ArrayIn) -> EtaCurve:
    """η of the majority carrier and the regime at each of ``temperatures`` (K) for
    ``density`` (m^-3) of ``species``."""
    dopant = material.dopant(species)
    T = np.asarray(temperatures, dtype=float)
    donors = {species: np.full(T.shape, density)} if dopant.kind == "donor" else {}
    acceptors = {species: np.full(T.shape, density)} if dopant.kind == "acceptor" else {}
    state = equilibrium.solve(material, T, donors, acceptors)
    eta = np.asarray(state.eta_n if dopant.kind == "donor" else state.eta_p)
    return EtaCurve(material, species, dopant.kind, density, T, eta, carriers.regime_code(state))


def map_groups(result: CheckedReports) -> dict[tuple[str, str], tuple[Material, list[MapPoint]]]:
    """(material name, species) -> (material, [MapPoint]) for the checked calculations."""
    groups: dict[tuple[str, str], tuple[Material, list[MapPoint]]] = {}
    for report in result.reports:
        calc = report.calc
        if report.error:
            continue
        spans = {axis.key: (float(axis.values[0]), float(axis.values[-1])) for axis in calc.sweep}
        species, density = _map_dopant(calc, spans)
        if species is None:
            continue  # undoped everywhere: no place on a doping axis
        active = [f.severity for f in report.findings if not f.waived]
        worst = max(active, key=SEVERITY_RANK.__getitem__) if active else None
        point = MapPoint(calc.name, density, calc.temperature, worst)
        for key, ends in spans.items():
            if key == "T":
                point.T_span = ends
            else:
                point.doping_span = ends
        groups.setdefault((calc.material.name, species), (calc.material, []))[1].append(point)
    return groups


def _map_dopant(
    calc: Calculation, spans: Mapping[AxisKey, tuple[float, float]]
) -> tuple[str | None, float]:
    """(species, density in m^-3) that places ``calc`` on a map: the majority dopant
    (the larger total, donors on a tie) and the net doping, or that dopant's density
    where the net is zero; (None, 0) when no dopant is above zero anywhere.  A swept
    density takes part with the larger end of its sweep."""

    def above_zero(group: str, densities: Mapping[str, float]) -> dict[str, float]:
        peaks = {
            sp: max(value, *spans.get((group, sp), (value,))) for sp, value in densities.items()
        }
        return {sp: v for sp, v in peaks.items() if v > 0}

    donors, acceptors = above_zero("donors", calc.donors), above_zero("acceptors", calc.acceptors)
    if not (donors or acceptors):
        return None, 0.0
    total_donors, total_acceptors = sum(calc.donors.values()), sum(calc.acceptors.values())
    majority = (
        donors if donors and (total_donors >= total_acceptors or not acceptors) else acceptors
    )
    species = max(majority, key=majority.__getitem__)
    return species, abs(total_donors - total_acceptors) or majority[species]
