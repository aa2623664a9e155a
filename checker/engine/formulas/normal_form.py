"""A small exact normal form for proving that two formula trees are equal.

The relations a stated formula is compared with are products and quotients of
positive quantities, sums of such terms, exponentials of sums, logarithms and
powers.  Each tree is brought to a quotient N/D of polynomials whose
"monomials" are products of atoms raised to rational powers times one
``exp(<polynomial>)``; exponentials merge by adding their arguments, a
logarithm of a monomial splits into a sum, a power of a monomial distributes,
and a power of a sum becomes an atom (the sum with its common factor taken
out, so that s^(3/2)/s^(1/2) gives s back).  Coefficients are exact fractions.
Two trees are equal when N1*D2 - N2*D1 expands to the zero polynomial.

This proves the common identities in well under a millisecond, with no sympy
import.  Anything outside it (a square root of a sum that is a perfect
square, absolute values) raises :class:`Unsupported` and the caller falls back
to sympy; so does anything beyond its size bounds (terms, integer powers of
sums, bits of a coefficient), which keep it from growing without end.  Symbols
are taken as positive (energies appear only inside exp, log, F and as
differences, which are kept as sums).
"""

from __future__ import annotations

from fractions import Fraction
from typing import TypeAlias

from ..expressions.tree import CALL, NAME, NEG, NUM, Node, fold

MAX_TERMS = 400  # larger expansions are left to sympy
MAX_POWER = 8  # integer powers of sums expanded up to this
MAX_BITS = 4096  # larger exact coefficients are left to sympy


class Unsupported(Exception):
    """The tree is outside the normal form (the caller uses sympy instead)."""


# A monomial: (factors, exp_argument); factors = sorted ((atom, exponent), ...),
# exp_argument = a frozen polynomial.  A polynomial (working form) is {monomial: Fraction};
# frozen: a sorted tuple of (monomial, coefficient).
Factor: TypeAlias = tuple[str, Fraction]
Monomial: TypeAlias = "tuple[tuple[Factor, ...], Frozen]"
Frozen: TypeAlias = "tuple[tuple[Monomial, Fraction], ...]"
Poly: TypeAlias = dict[Monomial, Fraction]
Quotient: TypeAlias = tuple[Poly, Poly]  # numerator, denominator
ONE_MONO: Monomial = ((), ())
# atom name -> frozen polynomial it stands for (powers of sums).  An atom's name is its
# polynomial written out, so the table is only needed while one proof runs: equal()
# empties it first, which bounds it by the size of one proof
_SUMS: dict[str, Frozen] = {}


def _freeze(poly: Poly) -> Frozen:
    return tuple(sorted(poly.items()))


def _const(value: Fraction | int) -> Poly:
    exact = Fraction(value)
    return {ONE_MONO: exact} if exact else {}


def _bounded(value: Fraction) -> Fraction:
    """Exact coefficients stay exact only while they are of a reasonable size."""
    if value.numerator.bit_length() > MAX_BITS or value.denominator.bit_length() > MAX_BITS:
        raise Unsupported("coefficient too large")
    return value


def _add(p: Poly, q: Poly, sign: int = 1) -> Poly:
    out = dict(p)
    for mono, coeff in q.items():
        total = out.get(mono, 0) + sign * coeff
        if total:
            out[mono] = total
        else:
            out.pop(mono, None)
    return out


def _merge(a: tuple[Factor, ...], b: tuple[Factor, ...]) -> tuple[Factor, ...]:
    factors = dict(a)
    for atom, power in b:
        total = factors.get(atom, 0) + power
        if total:
            factors[atom] = total
        else:
            factors.pop(atom)
    return tuple(sorted(factors.items()))


def _mono_mul(m1: Monomial, m2: Monomial) -> Monomial:
    exp_arg = _freeze(_add(dict(m1[1]), dict(m2[1]))) if m1[1] or m2[1] else ()
    return (_merge(m1[0], m2[0]), exp_arg)


def _numbers_out(mono: Monomial) -> tuple[Monomial, Fraction | int]:
    """Move the whole part of prime-number atoms ('#2' ** 3/2 -> 2 * '#2' ** 1/2) to the
    coefficient: returns (monomial, factor)."""
    factors, exp_arg = mono
    if not any(atom[0] == "#" and (power < 0 or power >= 1) for atom, power in factors):
        return mono, 1
    kept: list[Factor] = []
    factor = Fraction(1)
    for atom, power in factors:
        if atom[0] == "#":
            whole = power.numerator // power.denominator
            factor *= Fraction(int(atom[1:])) ** whole
            power -= whole
            if not power:
                continue
        kept.append((atom, power))
    return (tuple(kept), exp_arg), factor


def _mul(p: Poly, q: Poly) -> Poly:
    out: Poly = {}
    for m1, c1 in p.items():
        for m2, c2 in q.items():
            mono, factor = _numbers_out(_mono_mul(m1, m2))
            total = out.get(mono, 0) + _bounded(c1 * c2 * factor)
            if total:
                out[mono] = total
            else:
                out.pop(mono, None)
    if len(out) > MAX_TERMS:
        raise Unsupported("expansion too large")
    return _expand_integer_sums(out)


def _expand_integer_sums(poly: Poly) -> Poly:
    """A power-of-sum atom whose exponent has become an integer is multiplied out."""
    if not any(
        atom in _SUMS and power.denominator == 1 for mono in poly for atom, power in mono[0]
    ):
        return poly
    out: Poly = {}
    for (factors, exp_arg), coeff in poly.items():
        rest = tuple((a, e) for a, e in factors if not (a in _SUMS and e.denominator == 1))
        term = {(rest, exp_arg): coeff}
        for atom, power in factors:
            if atom in _SUMS and power.denominator == 1:
                term = _mul(term, _int_power(dict(_SUMS[atom]), int(power)))
        out = _add(out, term)
    return out


def _int_power(p: Poly, k: int) -> Poly:
    if abs(k) > MAX_POWER:
        raise Unsupported("power too large")
    if k < 0:
        if len(p) != 1:
            raise Unsupported("negative power of a sum inside a sum")
        p = _mono_inverse(p)
        k = -k
    out = _const(1)
    for _ in range(k):
        out = _mul(out, p)
    return out


def _mono_inverse(p: Poly) -> Poly:
    (((factors, exp_arg), coeff),) = p.items()
    inverse = tuple((a, -e) for a, e in factors)
    exp_inverse = _freeze({m: -c for m, c in exp_arg})
    return {(inverse, exp_inverse): 1 / coeff}


# ---- quotients N/D ---------------------------------------------------------------------------
def _quotient(n: Poly, d: Poly) -> Quotient:
    if not d:
        raise Unsupported("division by zero")
    if len(d) == 1:  # a monomial denominator divides into the numerator
        return _mul(n, _mono_inverse(d)), _const(1)
    return n, d


def _q_const(value: Fraction | int) -> Quotient:
    return _const(value), _const(1)


def _q_add(a: Quotient, b: Quotient, sign: int = 1) -> Quotient:
    (n1, d1), (n2, d2) = a, b
    if d1 == d2:
        return _quotient(_add(n1, n2, sign), d1)
    return _quotient(_add(_mul(n1, d2), _mul(n2, d1), sign), _mul(d1, d2))


def _q_mul(a: Quotient, b: Quotient) -> Quotient:
    return _quotient(_mul(a[0], b[0]), _mul(a[1], b[1]))


def _q_div(a: Quotient, b: Quotient) -> Quotient:
    return _quotient(_mul(a[0], b[1]), _mul(a[1], b[0]))


def _polynomial(q: Quotient) -> Poly:
    n, d = q
    if d != _const(1):
        raise Unsupported("a quotient where a polynomial is needed")
    return n


# ---- functions ---------------------------------------------------------------------------
def _rational(value: Fraction, power: Fraction) -> Fraction | None:
    """value**power as an exact fraction, or None."""
    size = max(value.numerator.bit_length(), value.denominator.bit_length())
    if size > 1 and abs(power) * size > MAX_BITS:  # checked before the power is taken
        raise Unsupported("coefficient too large")
    if power.denominator == 1:
        return value ** int(power)
    if value <= 0:
        return None
    root = power.denominator
    num = round(value.numerator ** (1.0 / root))
    den = round(value.denominator ** (1.0 / root))
    if num**root == value.numerator and den**root == value.denominator:
        return Fraction(num, den) ** power.numerator
    return None


def _number_atoms(value: Fraction, power: Fraction) -> tuple[Fraction, tuple[Factor, ...]]:
    """value**power for a positive rational: prime atoms '#p' with fractional exponents."""
    if value <= 0:
        raise Unsupported("fractional power of a negative number")
    factors: dict[int, int] = {}  # prime -> its count
    for part, sign in ((value.numerator, 1), (value.denominator, -1)):
        if part > 10**9:
            raise Unsupported("number too large to factor")
        prime = 2
        while prime * prime <= part:
            while part % prime == 0:
                factors[prime] = factors.get(prime, 0) + sign
                part //= prime
            prime += 1
        if part > 1:
            factors[part] = factors.get(part, 0) + sign
    coeff = Fraction(1)
    atoms: list[Factor] = []
    for prime, count in factors.items():
        exponent = count * power
        whole = exponent.numerator // exponent.denominator
        coeff *= Fraction(prime) ** whole
        if exponent - whole:
            atoms.append((f"#{prime}", exponent - whole))
    return coeff, tuple(sorted(atoms))


def _content(poly: Poly) -> tuple[Poly, Poly]:
    """poly = monomial content * primitive poly (leading coefficient 1)."""
    monos = list(poly)
    atoms = {a for mono in monos for a, _ in mono[0]}
    common: list[Factor] = []
    for atom in sorted(atoms):
        powers = [dict(m[0]).get(atom, Fraction(0)) for m in monos]
        low = min(powers)
        if low:
            common.append((atom, low))
    exp_args = {m[1] for m in monos}
    shared_exp = monos[0][1] if len(exp_args) == 1 else ()
    content: Poly = {(tuple(common), shared_exp): Fraction(1)}
    primitive = _mul(poly, _mono_inverse(content))
    # the sign stays inside the sum (its sign is not known); the size goes to the content
    lead = abs(_freeze(primitive)[0][1])
    return _mul(content, _const(lead)), _mul(primitive, _const(1 / lead))


def _power(base: Quotient, exponent: Fraction) -> Quotient:
    """base**exponent for a quotient base and an exact rational exponent."""
    n, d = base
    if exponent.denominator == 1:
        k = int(exponent)
        num, den = (n, d) if k >= 0 else (d, n)
        return _quotient(_int_power(num, abs(k)), _int_power(den, abs(k)))
    return _q_div(_poly_power(n, exponent), _poly_power(d, exponent))


def _poly_power(poly: Poly, exponent: Fraction) -> Quotient:
    if not poly:
        if exponent > 0:
            return {}, _const(1)
        raise Unsupported("zero to a negative power")
    if len(poly) == 1:
        (((factors, exp_arg), coeff),) = poly.items()
        exact = _rational(coeff, exponent)
        atoms: tuple[Factor, ...]
        if exact is None:
            coeff_part, atoms = _number_atoms(coeff, exponent)
        else:
            coeff_part, atoms = exact, ()
        scaled = tuple((a, e * exponent) for a, e in factors)
        exp_scaled = _freeze({m: c * exponent for m, c in exp_arg})
        mono = (_merge(scaled, atoms), exp_scaled)
        return _expand_integer_sums({mono: coeff_part}), _const(1)
    content, primitive = _content(poly)
    name = f"({_render(primitive)})"
    _SUMS[name] = _freeze(primitive)
    atom: Poly = {(((name, exponent),), ()): Fraction(1)}
    outer, _ = _poly_power(content, exponent)
    return _mul(outer, atom), _const(1)


def _exp(q: Quotient) -> Quotient:
    """exp of a polynomial; its c*log(x) terms come out as x**c."""
    arg = _polynomial(q)
    powers: tuple[Factor, ...] = ()
    rest: Poly = {}
    for mono, coeff in arg.items():
        factors, exp_arg = mono
        if (
            not exp_arg
            and len(factors) == 1
            and factors[0][1] == 1
            and factors[0][0].startswith("log[")
        ):
            powers = _merge(powers, ((factors[0][0][4:-1], coeff),))
        else:
            rest[mono] = coeff
    return _expand_integer_sums({(powers, _freeze(rest)): Fraction(1)}), _const(1)


def _log(q: Quotient) -> Quotient:
    n, d = q
    out: Poly = {}
    for part, sign in ((n, 1), (d, -1)):
        if len(part) != 1:
            out = _add(out, _atom(f"log{_render(part)}"), sign)
            continue
        (((factors, exp_arg), coeff),) = part.items()
        if coeff <= 0:
            raise Unsupported("logarithm of a negative number")
        out = _add(out, dict(exp_arg), sign)
        for atom, power in factors:
            out = _add(out, _mul(_atom(f"log[{atom}]"), _const(power)), sign)
        if coeff != 1:
            out = _add(out, _atom(f"log#{coeff}"), sign)
    return out, _const(1)


def _atom(name: str) -> Poly:
    return {(((name, Fraction(1)),), ()): Fraction(1)}


def _render(poly: Poly) -> str:
    return repr(_freeze(poly))


def _number(value: float) -> Fraction:
    exact = Fraction(value).limit_denominator(10**6)
    return exact if float(exact) == value else Fraction(value)


def to_normal(tree: Node) -> Quotient:
    """The quotient (N, D) of a tree (names are positive symbols)."""
    return fold(tree, _normal_of)


def _normal_of(node: Node, inner: list[Quotient]) -> Quotient:
    kind = node.kind
    if kind == NUM:
        return _q_const(_number(node.value))
    if kind == NAME:
        return _atom(node.value), _const(1)
    if kind == NEG:
        n, d = inner[0]
        return _mul(n, _const(-1)), d
    if kind == CALL:
        return _call(node, inner)
    left, right = inner
    if kind == "**":
        return _power_of(node.args[1], left, right)
    if kind == "+":
        return _q_add(left, right)
    if kind == "-":
        return _q_add(left, right, -1)
    if kind == "*":
        return _q_mul(left, right)
    return _q_div(left, right)


# relations without a closed form (quadratures of a Kane band): an atom of their arguments,
# like F_j, so an identity that keeps them whole is proved without sympy
OPAQUE_RELATIONS = frozenset({"kane_density_factor", "kane_einstein_ratio"})


def _call(node: Node, inner: list[Quotient]) -> Quotient:
    name, args = node.value, node.args
    if name == "exp":
        return _exp(inner[0])
    if name in ("log", "ln"):
        return _log(inner[0])
    if name == "log10":
        return _q_div(_log(inner[0]), _log(_q_const(10)))
    if name == "sqrt":
        return _power(inner[0], Fraction(1, 2))
    if name == "F":
        if args[0].kind != NUM:
            raise Unsupported("F with a non-numeric order")
        order = _number(args[0].value)
        if order == 0:  # F_0(x) = ln(1 + e^x) (DLMF 25.12.16): a 2D gas written either way
            return _log(_q_add(_q_const(1), _exp(inner[1])))
        return _atom(f"F{order}{_render(_polynomial(inner[1]))}"), _const(1)
    if name in OPAQUE_RELATIONS:
        return _atom(name + "".join(_render(_polynomial(part)) for part in inner)), _const(1)
    raise Unsupported(f"function {name}")


def _power_of(exponent_tree: Node, left: Quotient, exponent: Quotient) -> Quotient:
    """left**exponent; a written constant exponent (2, -1/2 as a number) is taken exactly."""
    if exponent_tree.kind == NUM or (
        exponent_tree.kind == NEG and exponent_tree.args[0].kind == NUM
    ):
        value = exponent_tree.value if exponent_tree.kind == NUM else -exponent_tree.args[0].value
        return _power(left, _number(value))
    if not left[0]:
        return {}, _const(1)  # 0**x with a positive symbolic x
    if exponent[1] == _const(1) and len(exponent[0]) == 1 and next(iter(exponent[0])) == ONE_MONO:
        return _power(left, next(iter(exponent[0].values())))
    # x**y = exp(y log x) for positive x
    return _exp(_q_mul(exponent, _log(left)))


def equal(a: Node, b: Node) -> bool:
    """True when the normal forms show a == b; raises Unsupported when they cannot tell."""
    _SUMS.clear()
    n1, d1 = to_normal(a)
    n2, d2 = to_normal(b)
    return not _add(_mul(n1, d2), _mul(n2, d1), -1)
