"""Physical dimensions of formula symbols, and how to write them for a reader.

A dimension is a tuple of rational exponents over the basis (m, s, V, C, K):
length, time, voltage, charge, temperature.  The basis is SI-equivalent
(kg = V·C·s²/m², A = C/s) but reads the way device engineers write units:
a mobility is m²/(V·s), not kg⁻¹·s²·A.
"""

from __future__ import annotations

from fractions import Fraction

_SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


# an exponent as written (int) or computed (Fraction)
Exponent = int | Fraction


class Dimension(tuple[Fraction, ...]):
    """Exponents of (m, s, V, C, K); multiply/divide/power like quantities.

    ``*`` and ``/`` combine two dimensions (not tuple repetition): the overrides differ
    from tuple's on purpose."""

    def __new__(
        cls, m: Exponent = 0, s: Exponent = 0, V: Exponent = 0, C: Exponent = 0, K: Exponent = 0
    ) -> Dimension:
        return super().__new__(
            cls, (Fraction(m), Fraction(s), Fraction(V), Fraction(C), Fraction(K))
        )

    def __mul__(self, other: Dimension) -> Dimension:  # type: ignore[override]
        return Dimension(*(a + b for a, b in zip(self, other)))

    def __truediv__(self, other: Dimension) -> Dimension:
        return Dimension(*(a - b for a, b in zip(self, other)))

    def __pow__(self, power: float | Fraction) -> Dimension:
        exponent = Fraction(power).limit_denominator(64)
        return Dimension(*(a * exponent for a in self))

    @property
    def dimensionless(self) -> bool:
        return not any(self)

    def __repr__(self) -> str:
        return f"Dimension({text(self)})"


NONE = Dimension()
LENGTH = Dimension(m=1)
AREA = Dimension(m=2)
TIME = Dimension(s=1)
VOLTAGE = Dimension(V=1)
CHARGE = Dimension(C=1)
TEMPERATURE = Dimension(K=1)
ENERGY = VOLTAGE * CHARGE
MASS = ENERGY * TIME**2 / AREA
CURRENT = CHARGE / TIME
RESISTANCE = VOLTAGE / CURRENT
MOBILITY = AREA / (VOLTAGE * TIME)
DIFFUSIVITY = AREA / TIME
VELOCITY = LENGTH / TIME
FIELD = VOLTAGE / LENGTH


def density(dim: int) -> Dimension:
    """Carriers per unit volume (3D), area (2D) or length (1D)."""
    return LENGTH**-dim


def conductivity(dim: int) -> Dimension:
    """q n mu: S/m in 3D, S (per square) in 2D, S·m in 1D."""
    return CHARGE * density(dim) * MOBILITY


# dimension -> (unit as engineers write it, what it usually is)
_NAMED = {
    NONE: ("1", "dimensionless"),
    ENERGY: ("J", "an energy"),
    VOLTAGE: ("V", "a voltage"),
    CHARGE: ("C", "a charge"),
    TEMPERATURE: ("K", "a temperature"),
    ENERGY / TEMPERATURE: ("J/K", "Boltzmann's constant"),
    LENGTH: ("m", "a length"),
    AREA: ("m²", "an area"),
    density(3): ("m⁻³", "a volume density"),
    density(2): ("m⁻²", "a sheet density"),
    density(1): ("m⁻¹", "a line density"),
    MOBILITY: ("m²/(V·s)", "a mobility"),
    DIFFUSIVITY: ("m²/s", "a diffusivity"),
    VELOCITY: ("m/s", "a velocity"),
    FIELD: ("V/m", "an electric field"),
    RESISTANCE: ("Ω", "a resistance"),
    conductivity(3): ("S/m", "a conductivity"),
    NONE / conductivity(3): ("Ω·m", "a resistivity"),
    conductivity(1): ("S·m", "a line conductance"),
    NONE / RESISTANCE: ("S", "a conductance (a 2D conductivity)"),
    MASS: ("kg", "a mass"),
    ENERGY * TIME: ("J·s", "an action (Planck's constant)"),
    CURRENT / AREA: ("A/m²", "a current density"),
    TIME: ("s", "a time"),
    RESISTANCE * AREA: ("Ω·m²", "a specific contact resistivity"),
}


def _power(symbol: str, exponent: Fraction) -> str:
    if exponent == 1:
        return symbol
    if exponent.denominator != 1:
        return f"{symbol}^({exponent})"  # m^(3/2): clearer than a superscript slash
    return symbol + str(exponent).translate(_SUPERSCRIPT)


def text(dimension: Dimension) -> str:
    """'m²/(V·s)' style; energies shown as J where volt and coulomb pair up."""
    if dimension in _NAMED:
        return _NAMED[dimension][0]
    m, s, V, C, K = dimension
    factors = [("m", m), ("s", s), ("K", K)]
    joules = Fraction(0)
    if V and C and (V > 0) == (C > 0):
        joules = min(V, C) if V > 0 else max(V, C)
    factors += [("J", joules), ("V", V - joules), ("C", C - joules)]
    up = [_power(sym, e) for sym, e in factors if e > 0]
    down = [_power(sym, -e) for sym, e in factors if e < 0]
    top = "·".join(up) or "1"
    if not down:
        return top
    bottom = "·".join(down)
    return f"{top}/({bottom})" if len(down) > 1 else f"{top}/{bottom}"


def describe(dimension: Dimension) -> str:
    """The unit, with what such a quantity usually is where that is known."""
    named = _NAMED.get(dimension)
    return f"{named[0]} ({named[1]})" if named else text(dimension)
