"""Independent reference computations for the tests (multiple precision, written
out from the published formulas; they share no code with the package)."""

import mpmath as mp
import scipy.constants as sc

K_B, Q = sc.k, sc.e


def mp_fermi_half(eta):
    return -mp.re(mp.polylog(mp.mpf(1.5), -mp.exp(eta)))


def mp_kane_half(eta, beta):
    """F_K(eta, beta) = (2/sqrt(pi)) ∫_0^∞ sqrt(x (1 + beta x)) (1 + 2 beta x) f(x - eta) dx,
    f(u) = 1/(1 + e^u): n/N_c of a Kane band E(1 + alpha E) = hbar^2 k^2/2m*, beta = alpha kT,
    by mpmath quadrature of its density of states (E. O. Kane, J. Phys. Chem. Solids 1, 249
    (1957))."""
    beta, eta = mp.mpf(beta), mp.mpf(eta)
    # f = e^eta/(e^eta + e^x) below eta = 0: mpmath's error control is absolute, so the
    # integrand is kept of order one however small the density
    scale = min(eta, 0)

    def integrand(x):
        return (
            mp.sqrt(x * (1 + beta * x))
            * (1 + 2 * beta * x)
            / (mp.exp(scale) + mp.exp(x - eta + scale))
        )

    top = max(eta, 1)
    return 2 / mp.sqrt(mp.pi) * mp.exp(scale) * mp.quad(integrand, [0, top, top + 40, mp.inf])


def kane_alpha(material):
    """alpha (J^-1) of the material's bulk Kane conduction band, 0 where it is parabolic."""
    shape = material.band_shape("electron")
    return float(shape.nonparabolicity) if shape.model == "kane" else 0.0


def mp_electron_half(material, eta, kT):
    """n/N_c: F_1/2(eta) for a parabolic conduction band, F_K(eta, alpha kT) for a Kane one."""
    alpha = kane_alpha(material)
    return mp_kane_half(eta, alpha * kT) if alpha > 0 else mp_fermi_half(eta)


def _lowered_energy(dopant, level_energy, N):
    """E(N) written out from the published forms (parameters are the dopant's data):
    Altermatt et al., J. Appl. Phys. 100, 113715 (2006): E_0 / (1 + (N/N_ref)^c);
    Pearson & Bardeen, Phys. Rev. 75, 865 (1949): max(E_0 - alpha N^(1/3), 0)."""
    model = dopant.lowering
    if model is None:
        return level_energy
    if hasattr(model, "N_ref"):
        return level_energy / (1 + (N / mp.mpf(model.N_ref)) ** mp.mpf(model.c))
    return level_energy * max(1 - mp.mpf(model.alpha) * mp.cbrt(N) / mp.mpf(model.E0), 0)


def _bound_share(dopant, N):
    """b(N) = 1 / (1 + (N/N_b)^d), Altermatt et al. (2006) eq. (3)."""
    share = dopant.share_model()
    return 1 / (1 + (N / mp.mpf(share.N_b)) ** mp.mpf(share.d))


def ionized_fraction(dopant, eta_band, kT, same_type_total):
    """N^ion / N summed over the dopant's levels (share s, degeneracy g):
    sum s [1 - b + b / (1 + g e^(eta_band + E(N)/kT))]; with b = 1 and E(N) = E_0 the
    isolated-impurity statistics of Sze & Ng (2007), ch. 1."""
    N = mp.mpf(same_type_total)
    b = _bound_share(dopant, N)
    total = mp.mpf(0)
    for level in dopant.bound_levels():
        E = _lowered_energy(dopant, mp.mpf(level.energy), N)
        total += mp.mpf(level.share) * (
            1 - b + b / (1 + mp.mpf(level.degeneracy) * mp.exp(eta_band + E / kT))
        )
    return total


def reference_solve(material, T, donors, acceptors):
    """Independent solve in 40-digit arithmetic: bisection on the plain
    (not logarithmic) neutrality equation n + N_A^- - p - N_D^+ = 0.

    Band and dopant numbers are taken from the material (they are data); the
    statistics are written out here (see ionized_fraction).
    """
    with mp.workdps(40):
        kT = mp.mpf(K_B) * T
        Eg = mp.mpf(float(material.band_gap(T)))
        Nc, Nv = mp.mpf(float(material.Nc(T))), mp.mpf(float(material.Nv(T)))
        nd_tot, na_tot = sum(donors.values()), sum(acceptors.values())

        def charge(eta):
            eta_p = -eta - Eg / kT
            total = Nc * mp_electron_half(material, eta, kT) - Nv * mp_fermi_half(eta_p)
            for name, N in acceptors.items():
                total += N * ionized_fraction(material.dopant(name), eta_p, kT, na_tot)
            for name, N in donors.items():
                total -= N * ionized_fraction(material.dopant(name), eta, kT, nd_tot)
            return total

        lo, hi = -Eg / kT - 200, mp.mpf(200)
        for _ in range(400):
            mid = (lo + hi) / 2
            if charge(mid) > 0:
                hi = mid
            else:
                lo = mid
            if hi - lo < mp.mpf(10) ** -25 * max(1, abs(mid)):
                break
        return float((lo + hi) / 2)
