"""Energy-window engine: carrier density, its eta-derivative, the generalized Einstein
ratio and the near-equilibrium (Landauer) conductance of isotropic bands, vectorized.

Every quantity is a window integral over the band (x = E/kT from the band edge,
f(u) = 1/(1 + e^u), -f' = f (1 - f) the window):

    n(eta)      = ∫ N(E) (-df/dE) dE          (= ∫ D f dE; N the states below E)
    dn/deta     = kT ∫ D(E) (-df/dE) dE
    G(eta, L)   = (g_s q^2/h) ∫ M(E) T(E) (-df/dE) dE,  T = lambda/(lambda + L),
                  lambda(E) = lambda_0 (E/kT)^r

with N, D, M from ``physics.bands``.  Bands given as a tuple (subbands, valleys of
different mass) are summed; each band's own eta is eta - edge/kT.

Methods
-------
* Power-law bands (k^2 ∝ E^p: parabolic p = 1, Dirac p = 2) use the closed forms
  A (kT)^a Γ(a+1) F_(a-1)(eta) with the normalized Fermi–Dirac integrals of
  ``physics.fermi`` (n_3D = N_c F_1/2, n_2D = N_2D ln(1 + e^eta), n_1D = N_1D F_-1/2,
  graphene n = (2/pi)(kT/hbar v_F)^2 F_1) wherever the order is tabulated.
* Everything else (Kane bands, finite L, exponents without a tabulated order) uses
  one fixed node set: the substitution s = f(x - eta) turns the window into ds on
  [0, f(-eta)], integrated by tanh–sinh (h = 1/12, |t| <= 4: 97 nodes; 129 nodes
  with h = 1/16 for a finite length L).  The
  nodes in x are x_k = ln(1 + e^eta q_k) + b_k with q_k = 1/(1 + e^(pi sinh t_k)),
  b_k = ln(1 + e^(-pi sinh t_k)), so no cancellation occurs for any eta; an array
  of eta times the node vector is one numpy expression.  Measured against mpmath
  quadrature (30 digits, tests/test_energy_window.py) over eta in [-40, 60]: relative
  error <= 1e-12 for densities, dn/deta and smooth transmissions (typically 1e-14);
  about 1e-11 for a transmission step lambda(E) = L within ~0.03 kT of the band edge
  (L/lambda_0 = 1e-3, r = 2 in 1D); the tests hold every case to 1e-10.

References
----------
M. Lundstrom and C. Jeong, Near-Equilibrium Transport (World Scientific, 2012),
ch. 2-6 (Landauer conductance, modes, lambda(E), ballistic and diffusive limits).
H. Takahasi and M. Mori, Publ. RIMS Kyoto Univ. 9, 721 (1974) (tanh–sinh rule).
J. S. Blakemore, Solid-State Electron. 25, 1067 (1982) (normalized F_j).
"""

from __future__ import annotations

import os
from collections.abc import Callable, Iterable, Sequence
from fractions import Fraction
from math import lgamma
from typing import Literal, TypeAlias, overload

import numpy as np

from ..errors import ConvergenceError, InputError
from . import _threads
from . import bands as _bands
from .arrays import ArrayIn, FloatArray, FloatOrArray, IndexArray, softplus
from .bands import Band, PowerLawBand, is_power_law
from .constants import BOLTZMANN, ELEMENTARY_CHARGE, PLANCK
from .fermi import SUPPORTED_ORDERS, fermi_dirac, inverse_fermi_dirac_half, log_fermi_dirac

LANDAUER_QUANTUM = 2.0 * ELEMENTARY_CHARGE**2 / PLANCK  # 2 q^2/h in S (exact, SI 2019)

_BIG_ETA = 300.0  # above: x_k = eta - a_k + ln(1 + e^(a_k - eta)) + b_k (no overflow)
_BLOCK = 512  # points per block: (512 x 129) temporaries stay in cache
_TASK = 1 << 15  # points per thread task
WORKERS = min(2, os.cpu_count() or 1)

# one band or several (subbands, valleys) whose densities and conductances add
Bands: TypeAlias = Band | tuple[Band, ...] | list[Band]
# G(x, rows): the window integrand at nodes x (points x nodes) for the rows of a block
Integrand: TypeAlias = Callable[[FloatArray, slice], FloatArray]


class _NodeSet:
    """tanh–sinh nodes on s in [0, 1] written in the window variable (module docstring).

    q_k = 1/(1 + e^(pi sinh t_k)), b_k = ln(1 + e^(-pi sinh t_k)), a_k = b_k + pi sinh t_k,
    w_k the weights of ds (sum -> 1); t_k = k h, |t_k| <= 4.
    """

    def __init__(self, step: float, t_max: float = 4.0) -> None:
        t = np.arange(-round(t_max / step), round(t_max / step) + 1) * step
        ps = np.pi * np.sinh(t)
        self.q = 1.0 / (1.0 + np.exp(ps))
        self.b = softplus(-ps)
        self.a = self.b + ps
        self.w = step * np.pi * np.cosh(t) * self.q / (1.0 + np.exp(-ps))
        self.size = t.size


# densities and smooth transmissions; transmission steps lambda(E) = L near the edge
DENSITY_NODES, TRANSMISSION_NODES = _NodeSet(1.0 / 12.0), _NodeSet(1.0 / 16.0)


def _as_bands(bands: Bands) -> tuple[Band, ...]:
    return tuple(bands) if isinstance(bands, (tuple, list)) else (bands,)


def _band_sum(bands: Iterable[Band], term: Callable[[Band], FloatArray]) -> FloatArray:
    """The sum of ``term(band)`` over the bands (one at least): contributions add."""
    first, *rest = bands
    total = term(first)
    for band in rest:
        total = total + term(band)
    return total


def _window_nodes(eta: FloatArray, nodes: _NodeSet) -> FloatArray:
    """x_k(eta) for each point (rows) and node (columns), all > 0."""
    x: FloatArray = np.log1p(np.exp(np.minimum(eta, _BIG_ETA))[:, None] * nodes.q)
    x += nodes.b
    big = eta > _BIG_ETA
    if np.any(big):
        e = eta[big][:, None]
        x[big] = e - nodes.a + np.log1p(np.exp(nodes.a - e)) + nodes.b
    return x


def _window_sums(
    eta: FloatArray, integrands: Sequence[Integrand], nodes: _NodeSet = DENSITY_NODES
) -> list[FloatArray]:
    """sum_k w_k G(x_k) per point for each integrand G(x, rows) (rows: a slice).

    The window integral ∫ G (-f'(x - eta)) dx equals logistic(eta) times this sum.
    """
    outs = [np.empty(eta.size) for _ in integrands]

    def task(first: int) -> None:
        for start in range(first, min(first + _TASK, eta.size), _BLOCK):
            rows = slice(start, start + _BLOCK)
            x = _window_nodes(eta[rows], nodes)
            for out, integrand in zip(outs, integrands):
                out[rows] = integrand(x, rows) @ nodes.w

    starts = range(0, eta.size, _TASK)
    if len(starts) > 1 and WORKERS > 1 and _threads.on_main_thread():
        # numpy releases the GIL inside ufuncs, so tasks overlap on both cores (the pool
        # is the physics layer's, kept across calls; a call from one of its workers, e.g.
        # a Kane block of the solve, works alone rather than wait on its own pool)
        list(_threads.pool(WORKERS).map(task, starts))
    else:
        for first in starts:
            task(first)
    return outs


def _log_logistic(eta: FloatArray) -> FloatArray:
    """ln(1/(1 + e^-eta)) without overflow."""
    return -softplus(-eta)


def _tabulated(order: float) -> bool:
    frac = Fraction(order).limit_denominator(2)
    return frac in SUPPORTED_ORDERS and abs(float(frac) - order) < 1e-12


def _power_law(band: PowerLawBand, kind: Literal["states", "modes"]) -> tuple[float, float]:
    """(A, a) with quantity = A E^a for a power-law band, kind 'states' or 'modes'."""
    d, p, c = band.dimension, band.power, band.k_squared_coefficient
    if kind == "states":
        return _bands._state_factor(band) * c ** (d / 2.0), p * d / 2.0
    return _bands._mode_factor(band) * c ** ((d - 1) / 2.0), p * (d - 1) / 2.0


def _check_method(method: str) -> None:
    if method not in ("auto", "quadrature"):
        raise InputError(f"method must be 'auto' or 'quadrature', got {method!r}")


def _closed_form_ok(band: Band, method: str, *orders: float) -> bool:
    _check_method(method)
    return method == "auto" and band.power is not None and all(map(_tabulated, orders))


class _Points:
    """eta, T and extra per-point inputs broadcast together and flattened."""

    def __init__(self, eta: ArrayIn, T: ArrayIn, **extra: ArrayIn) -> None:
        arrays = np.broadcast_arrays(
            *(np.asarray(v, dtype=float) for v in (eta, T, *extra.values()))
        )
        self.shape = arrays[0].shape
        flat = [np.ascontiguousarray(a).ravel() for a in arrays]
        self.eta, self.T = flat[0], flat[1]
        if np.any(~(self.T > 0)) or not np.all(np.isfinite(self.T)):
            raise InputError("temperature must be finite and > 0 K")
        if np.any(np.isnan(self.eta)):
            raise InputError("eta must not be NaN")
        self.kT = BOLTZMANN * self.T
        self.extra = dict(zip(extra, flat[2:]))

    def band_eta(self, band: Band) -> FloatArray:
        return self.eta - band.edge / self.kT

    def shaped(self, flat: FloatArray) -> FloatOrArray:
        out = flat.reshape(self.shape)
        return out if out.ndim else float(out)


def _log_density_and_slope(
    band: Band, pts: _Points, method: str, slope: bool = True
) -> tuple[FloatArray, FloatArray | None]:
    """(ln n, (dn/deta)/n or None) of one band at every point."""
    eta = pts.band_eta(band)
    if is_power_law(band):
        A, a = _power_law(band, "states")
        if _closed_form_ok(band, method, a - 1.0, a - 2.0):
            log_f = log_fermi_dirac(a - 1.0, eta)
            log_n = np.log(A) + a * np.log(pts.kT) + lgamma(a + 1.0) + log_f
            return log_n, np.exp(log_fermi_dirac(a - 2.0, eta) - log_f) if slope else None
    _check_method(method)
    kT = pts.kT
    integrands = [lambda x, rows: _bands.states_below(band, x * kT[rows, None])]
    if slope:
        integrands.append(
            lambda x, rows: _bands.density_of_states(band, x * kT[rows, None]) * kT[rows, None]
        )
    sums = _window_sums(eta, integrands)
    log_n = _log_logistic(eta) + np.log(sums[0])
    return log_n, sums[1] / sums[0] if slope else None


@overload
def _total_log_density(
    bands: Bands, pts: _Points, method: str, slope: Literal[True] = ...
) -> tuple[FloatArray, FloatArray]: ...
@overload
def _total_log_density(
    bands: Bands, pts: _Points, method: str, slope: Literal[False]
) -> tuple[FloatArray, None]: ...
def _total_log_density(
    bands: Bands, pts: _Points, method: str, slope: bool = True
) -> tuple[FloatArray, FloatArray | None]:
    parts = [_log_density_and_slope(b, pts, method, slope) for b in _as_bands(bands)]
    if len(parts) == 1:
        return parts[0]
    logs = np.array([p[0] for p in parts])
    top = np.max(logs, axis=0)
    top = np.where(np.isfinite(top), top, 0.0)
    shares = np.exp(logs - top)
    total = shares.sum(axis=0)
    mean_slope = sum(s * p[1] for s, p in zip(shares, parts)) / total if slope else None
    return top + np.log(total), mean_slope


def carrier_density(bands: Bands, eta: ArrayIn, T: ArrayIn, method: str = "auto") -> FloatOrArray:
    """Carrier density n(eta) of a band or a tuple of bands, per m^d.

    Formula: n = ∫ D(E) f(E) dE = ∫ N(E) (-df/dE) dE summed over the bands, with
    eta = (E_F - E_ref)/kT and each band at eta - edge/kT.  Closed forms for
    power-law bands: n = N_eff F_(pd/2-1)(eta) (``effective_density``); Kane
    bands by the fixed quadrature.  A Dirac band gives the electrons of the
    upper cone (holes: the same call at -eta).
    Units: eta dimensionless, T in K -> m^-3 (3D), m^-2 (2D), m^-1 (1D).
    ``method='quadrature'`` forces the quadrature (tests, benchmarks).
    Validity: any eta (underflows to 0 below about -700); quadrature accuracy
    <= 1e-12 relative for eta in [-40, 60] (measured against mpmath).

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2; Blakemore,
    Solid-State Electron. 25, 1067 (1982).
    """
    pts = _Points(eta, T)
    log_n, _ = _total_log_density(bands, pts, method, slope=False)
    return pts.shaped(np.exp(log_n))


def density_slope(bands: Bands, eta: ArrayIn, T: ArrayIn, method: str = "auto") -> FloatOrArray:
    """dn/deta = kT ∫ D(E) (-df/dE) dE per m^d (the thermodynamic density of states).

    Closed form for power-law bands: N_eff F_(pd/2-2)(eta).  Units and validity
    as for :func:`carrier_density`.

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2.
    """
    pts = _Points(eta, T)
    log_n, slope = _total_log_density(bands, pts, method)
    return pts.shaped(np.exp(log_n) * slope)


def generalized_einstein_ratio(
    bands: Bands, eta: ArrayIn, T: ArrayIn, method: str = "auto"
) -> FloatOrArray:
    """(D/mu)/(kT/q) = n/(dn/deta), any band (Kane, Dirac, several subbands).

    Parabolic 3D/2D/1D: F_1/2/F_-1/2, (1 + e^-eta) ln(1 + e^eta), F_-1/2/F_-3/2;
    Dirac band (one carrier): F_1/F_0 -> eta/2 when degenerate.  1 in the
    non-degenerate limit for every band.  Dimensionless; finite for all eta.

    References
    ----------
    P. T. Landsberg, Eur. J. Phys. 2, 213 (1981); Lundstrom & Jeong (2012), ch. 2.
    """
    pts = _Points(eta, T)
    _, slope = _total_log_density(bands, pts, method)
    return pts.shaped(1.0 / slope)


def log_density_and_slope(
    bands: Bands, eta: ArrayIn, T: ArrayIn, method: str = "auto"
) -> tuple[FloatOrArray, FloatOrArray]:
    """(ln n, d ln n/d eta) of a band or bands: the pair a Newton solve on eta needs.

    ln n in ln(m^-d) without underflow (eta down to -1e4 and below); the slope is
    (dn/deta)/n, in (0, 1] for every band.  Units and validity as for
    :func:`carrier_density`.

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2.
    """
    pts = _Points(eta, T)
    log_n, slope = _total_log_density(bands, pts, method)
    return pts.shaped(log_n), pts.shaped(slope)


def kane_density_factor(
    band: _bands.KaneBand, eta: ArrayIn, T: ArrayIn
) -> tuple[FloatOrArray, FloatOrArray]:
    """(ln F_K, d ln F_K/d eta): the Kane density over the parabolic N_c of the same mass.

    Formula: n = N_c F_K(eta, beta), beta = alpha kT,
      F_K = (2/sqrt(pi)) ∫_0^∞ sqrt(x (1 + beta x)) (1 + 2 beta x) / (1 + e^(x - eta)) dx,
    independent of the mass, so a material's own N_c(T) times F_K is the Kane
    density; F_K = F_1/2 at alpha = 0.  Dimensionless; T in K.  Validity and
    accuracy as for :func:`carrier_density` (quadrature, <= 1e-12 relative).

    References
    ----------
    E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957); B. R. Nag, Electron Transport
    in Compound Semiconductors (Springer, 1980), ch. 3 (non-parabolic carrier density).
    """
    if band.dimension != 3:
        raise InputError("the Kane density factor is defined for a bulk (3D) band")
    log_n, slope = log_density_and_slope(band, eta, T, "quadrature")
    twin = _bands.ParabolicBand(3, band.mass, band.valley_degeneracy, band.spin_degeneracy)
    return log_n - np.log(effective_density(twin, T)), slope


def forward_velocity(bands: Bands, eta: ArrayIn, T: ArrayIn) -> FloatOrArray:
    """<v_x^+>: the mean velocity of the carriers moving in +x, any band (m/s).

    Formula: <v_x^+> = (2 g_s/h) ∫ M(E) f(E) dE / n = (2 g_s/h) ∫ M_c (-df/dE) dE / n
    with M_c = ∫ M dE (``bands.modes_below``), by the fixed quadrature.  Parabolic
    3D: sqrt(2kT/(pi m*)) F_1/F_1/2.  Evaluated in logarithms, finite for any eta.

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2 and 6.
    """
    pts = _Points(eta, T)
    group = _as_bands(bands)
    kT = pts.kT

    def log_flux(band: Band) -> FloatArray:
        band_eta = pts.band_eta(band)
        (total,) = _window_sums(
            band_eta, [lambda x, rows: _bands.modes_below(band, x * kT[rows, None])]
        )
        prefactor: float = np.log(2.0 * band.spin_degeneracy / PLANCK)
        return prefactor + _log_logistic(band_eta) + np.log(total)

    flux = np.logaddexp.reduce([log_flux(b) for b in group])
    log_n, _ = _total_log_density(group, pts, "auto", slope=False)
    return pts.shaped(np.exp(flux - log_n))


def effective_density(band: Band, T: ArrayIn) -> FloatArray:
    """N_eff of a power-law band, n = N_eff F_(pd/2-1)(eta), per m^d.

    Formula: N_eff = g_s g_v V_d c^(d/2) (kT)^(pd/2) Γ(pd/2 + 1) / (2 pi)^d for
    k^2 = c E^p.  Parabolic: N_c = 2 g_v (m* kT/(2 pi hbar^2))^(3/2),
    N_2D = g_v m* kT/(pi hbar^2), N_1D = g_v sqrt(2 m* kT/(pi hbar^2)) (spin
    included); Dirac: (g_s g_v/(2 pi)) (kT/(hbar v_F))^2.  T in K.

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2; Sze & Ng,
    Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1 (N_c).
    """
    if not is_power_law(band):
        raise InputError("a Kane band has no effective density (not a power law)")
    A, a = _power_law(band, "states")
    density: FloatArray = (
        A * (BOLTZMANN * np.asarray(T, dtype=float)) ** a * np.exp(lgamma(a + 1.0))
    )
    return density


# ----------------------------------------------------------------- conductance


def _mode_integral(
    band: Band,
    pts: _Points,
    method: str,
    exponent: float = 0.0,
    length_ratio: FloatArray | None = None,
    r: float = 0.0,
) -> FloatArray:
    """∫ M(E) x^exponent T(E) (-df/dE) dE per unit cross-section, x = E/kT.

    T = 1/(1 + c x^-r) with c = ``length_ratio`` (per point, L/lambda_0); None: T = 1.
    """
    eta = pts.band_eta(band)
    if length_ratio is None and is_power_law(band):
        A, a = _power_law(band, "modes")
        if a + exponent <= -1.0:
            raise InputError(
                f"the window integral of E^{a + exponent:g} diverges at the "
                "band edge; use a larger exponent r"
            )
        if _closed_form_ok(band, method, a + exponent - 1.0):
            b = a + exponent  # M x^r = A (kT)^a x^(a + r)
            closed: FloatArray = A * pts.kT**a * np.exp(lgamma(b + 1.0)) * fermi_dirac(b - 1.0, eta)
            return closed
    _check_method(method)
    kT = pts.kT

    def integrand(x: FloatArray, rows: slice) -> FloatArray:
        value = _bands.mode_density(band, x * kT[rows, None])
        if exponent:
            value *= x**exponent
        if length_ratio is not None:
            damping = length_ratio[rows, None] * (x**-r if r else 1.0)
            damping += 1.0
            value /= damping
        return value

    nodes = DENSITY_NODES if length_ratio is None else TRANSMISSION_NODES
    (total,) = _window_sums(eta, [integrand], nodes)
    return np.exp(_log_logistic(eta)) * total


def modes_in_window(bands: Bands, eta: ArrayIn, T: ArrayIn, method: str = "auto") -> FloatOrArray:
    """<M> = ∫ M(E) (-df/dE) dE: the number of conducting modes per spin in the window.

    Units: 1D dimensionless, 2D per m of width, 3D per m^2 of cross-section.
    Parabolic closed forms: g_v F_-1(eta) (1D), g_v sqrt(2 m* kT)/(pi hbar)
    Γ(3/2) F_-1/2 (2D), g_v m* kT/(2 pi hbar^2) F_0 (3D); Dirac: g_v kT/(pi hbar v_F) F_0
    per cone.

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2-3.
    """
    pts = _Points(eta, T)
    return pts.shaped(_band_sum(_as_bands(bands), lambda b: _mode_integral(b, pts, method)))


def _quantum(band: Band) -> float:
    return band.spin_degeneracy * ELEMENTARY_CHARGE**2 / PLANCK


def conductance(
    bands: Bands,
    eta: ArrayIn,
    T: ArrayIn,
    length: ArrayIn,
    mfp0: ArrayIn,
    r: float = 0.0,
    method: str = "auto",
) -> FloatOrArray:
    """Landauer conductance G = (g_s q^2/h) ∫ M(E) T(E) (-df/dE) dE, T = lambda/(lambda + L).

    lambda(E) = lambda_0 (E/kT)^r, E the kinetic energy above each band's edge
    (r is the exponent of the mean free path for backscattering, not of tau:
    see ``bands.mean_free_path_exponent``).  Units: length and mfp0 in m; G in S
    (1D), S/m per unit width (2D), S/m^2 per unit cross-section (3D).  g_s = 2
    gives 2q^2/h = 7.748091729e-5 S.  Limits: L -> 0 is (2q^2/h) <M>
    (:func:`ballistic_conductance`); L >> lambda gives sigma/L with sigma of
    :func:`diffusive_conductivity`.  ``r`` a number; eta, T, length, mfp0 broadcast.
    Validity: elastic scattering, near equilibrium (linear response).

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 3 (T = lambda/(lambda + L)).
    """
    pts = _Points(eta, T, length=length, mfp0=mfp0)
    if np.any(pts.extra["length"] < 0) or np.any(~(pts.extra["mfp0"] > 0)):
        raise InputError("length must be >= 0 and mfp0 > 0 (m)")
    ratio = pts.extra["length"] / pts.extra["mfp0"]
    if not np.any(ratio):
        ratio = None  # L = 0: the ballistic closed forms apply
    total = _band_sum(
        _as_bands(bands),
        lambda b: _quantum(b) * _mode_integral(b, pts, method, length_ratio=ratio, r=float(r)),
    )
    return pts.shaped(total)


def ballistic_conductance(
    bands: Bands, eta: ArrayIn, T: ArrayIn, method: str = "auto"
) -> FloatOrArray:
    """G = (g_s q^2/h) <M>, the L -> 0 limit of :func:`conductance` (same units).

    References
    ----------
    R. Landauer, IBM J. Res. Dev. 1, 223 (1957); Lundstrom & Jeong (2012), ch. 3.
    """
    pts = _Points(eta, T)
    return pts.shaped(
        _band_sum(_as_bands(bands), lambda b: _quantum(b) * _mode_integral(b, pts, method))
    )


def diffusive_conductivity(
    bands: Bands, eta: ArrayIn, T: ArrayIn, mfp0: ArrayIn, r: float = 0.0, method: str = "auto"
) -> FloatOrArray:
    """sigma = lim L G(L) = (g_s q^2/h) ∫ M(E) lambda(E) (-df/dE) dE.

    Units: mfp0 in m; S/m (3D), S per square (2D sheet conductance), S m (1D).
    Closed form for power-law bands: A lambda_0 (kT)^a Γ(a+r+1) F_(a+r-1)(eta)
    where the order is tabulated.  Equals q n mu with mu of :func:`diffusive_mobility`
    and, for lambda = c_d v tau, the Boltzmann (q^2/d) ∫ D v^2 tau (-df/dE) dE.

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 3 and 6.
    """
    pts = _Points(eta, T, mfp0=mfp0)
    if np.any(~(pts.extra["mfp0"] > 0)):
        raise InputError("mfp0 must be > 0 (m)")
    r = float(r)
    total = _band_sum(
        _as_bands(bands), lambda b: _quantum(b) * _mode_integral(b, pts, method, exponent=r)
    )
    return pts.shaped(total * pts.extra["mfp0"])


def diffusive_mobility(
    bands: Bands, eta: ArrayIn, T: ArrayIn, mfp0: ArrayIn, r: float = 0.0, method: str = "auto"
) -> FloatOrArray:
    """mu = sigma/(q n) in m^2/(V s), sigma from :func:`diffusive_conductivity`.

    Parabolic 3D with lambda = (4/3) v tau, tau = tau_0 (E/kT)^s (r = s + 1/2):
    mu = (q tau_0/m*) Γ(s + 5/2) F_(s+1/2)/(Γ(5/2) F_1/2).

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 6; M. Lundstrom,
    Fundamentals of Carrier Transport, 2nd ed. (2000), ch. 3 (<<tau>>).
    """
    sigma = diffusive_conductivity(bands, eta, T, mfp0, r, method)
    return sigma / (ELEMENTARY_CHARGE * carrier_density(bands, eta, T, method))


# ----------------------------------------------------------------- graphene


def dirac_net_density(band: Band, eta: ArrayIn, T: ArrayIn) -> FloatOrArray:
    """n - p of a Dirac band (both cones) at eta = (E_F - E_D)/kT, per m^2.

    Formula: N_eff [F_1(eta) - F_1(-eta)] = N_eff [eta^2/2 + pi^2/6 - 2 F_1(-|eta|)]
    sign(eta), N_eff = (g_s g_v/(2 pi)) (kT/(hbar v_F))^2.  T = 0 limit:
    sign(E_F) E_F^2/(pi hbar^2 v_F^2) (graphene).  Absolute error ~1e-15 n_i near
    the Dirac point.  T in K.

    References
    ----------
    T. Fang et al., Appl. Phys. Lett. 91, 092109 (2007).
    """
    pts = _Points(eta, T)
    mag = np.abs(pts.band_eta(band))
    g = 0.5 * mag * mag + np.pi**2 / 6.0 - 2.0 * fermi_dirac(1, -mag)
    net = np.sign(pts.band_eta(band)) * effective_density(band, pts.T) * g
    return pts.shaped(net)


def dirac_intrinsic_density(band: Band, T: ArrayIn) -> FloatArray:
    """n_i = n = p at eta = 0: (g_s g_v/4) (pi/6) (kT/(hbar v_F))^2 per m^2.

    Graphene (g_s = g_v = 2): n_i = (pi/6)(kT/(hbar v_F))^2, about 8e10 cm^-2 at
    300 K for v_F = 1e8 cm/s.  T in K.

    References
    ----------
    T. Fang et al., Appl. Phys. Lett. 91, 092109 (2007), eq. (2).
    """
    return effective_density(band, T) / 2.0 * (np.pi**2 / 6.0)


# ----------------------------------------------------------------- inverse


def _single_closed_form(
    band: Band, density: FloatArray, T: FloatArray, kT: FloatArray
) -> FloatOrArray | None:
    """eta for one parabolic band in 2D (ln(e^u - 1)) or 3D (inverse F_1/2), else None."""
    if not isinstance(band, _bands.ParabolicBand) or band.dimension == 1:
        return None
    u = density / effective_density(band, T)
    if band.dimension == 3:
        eta = inverse_fermi_dirac_half(u)
    else:  # ln(e^u - 1): expm1 for small u, u + ln(1 - e^-u) for large
        with np.errstate(over="ignore"):
            eta = np.where(
                u < 1.0,
                np.log(np.expm1(np.minimum(u, 1.0))),
                u + np.log1p(-np.exp(-np.maximum(u, 1.0))),
            )
    return eta + band.edge / kT


def eta_from_density(
    bands: Bands, density: ArrayIn, T: ArrayIn, method: str = "auto"
) -> FloatOrArray:
    """eta = (E_F - E_ref)/kT at which the band(s) hold ``density`` (per m^d), vectorized.

    One parabolic 2D subband: eta = ln(e^(n/N_2D) - 1) (exact; expm1/log1p keep
    it accurate for n/N_2D from 1e-300 to 700); one parabolic 3D band: the
    inverse of F_1/2; otherwise safeguarded Newton on ln n(eta) (slope
    (dn/deta)/n in (0, 1]; the step with slope 1 never passes the root and
    bounds it) to |d eta| <= 1e-12 (1 + |eta|).  Several subbands: give a tuple,
    e.g. ``bands.parabolic_subbands(2, m, [E_1, E_2])``.  T in K.

    References
    ----------
    Lundstrom & Jeong, Near-Equilibrium Transport (2012), ch. 2;
    Ando, Fowler & Stern, Rev. Mod. Phys. 54, 437 (1982).
    """
    pts = _Points(density, T)
    n = pts.eta  # the first broadcast input, here the density
    if np.any(~(n > 0)) or not np.all(np.isfinite(n)):
        raise InputError("density must be finite and > 0")
    group = _as_bands(bands)
    if len(group) == 1 and method == "auto":
        eta = _single_closed_form(group[0], n, pts.T, pts.kT)
        if eta is not None:
            return pts.shaped(np.asarray(eta, dtype=float))
    return pts.shaped(_newton_on_log_density(group, np.log(n), pts, method))


def _newton_on_log_density(
    group: tuple[Band, ...], target: FloatArray, pts: _Points, method: str
) -> FloatArray:
    eta = np.zeros_like(target)
    lo, hi = np.full_like(target, -np.inf), np.full_like(target, np.inf)
    active = np.arange(target.size)
    for _ in range(100):
        sub = _Subset(pts, active, eta[active])
        log_n, slope = _total_log_density(group, sub, method)
        f = log_n - target[active]
        e = eta[active]
        # slope <= 1: e - f is a bound on the root on the side of e
        lo[active] = np.where(f < 0, np.maximum(lo[active], e - f), lo[active])
        hi[active] = np.where(f > 0, np.minimum(hi[active], e - f), hi[active])
        new = e - f / slope
        outside = ~((new >= lo[active]) & (new <= hi[active]))
        both = np.isfinite(lo[active]) & np.isfinite(hi[active])
        new = np.where(outside & both, 0.5 * (lo[active] + hi[active]), new)
        new = np.where(outside & ~both, e - f, new)
        eta[active] = new
        done = (np.abs(new - e) <= 1e-13 * (1.0 + np.abs(e))) | (f == 0)
        active = active[~done]
        if active.size == 0:
            return eta
    raise ConvergenceError(
        f"eta_from_density did not converge ({active.size} points left after 100 Newton steps)"
    )


class _Subset(_Points):
    """The points ``index`` of ``pts`` at new eta values (no re-validation)."""

    def __init__(self, pts: _Points, index: IndexArray, eta: FloatArray) -> None:  # noqa: D107
        self.shape = eta.shape
        self.eta, self.T, self.kT = eta, pts.T[index], pts.kT[index]
        self.extra = {}
