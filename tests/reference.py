"""Independent reference computations for the tests (multiple precision, written
out from the published formulas; they share no code with the package)."""

import mpmath as mp
import scipy.constants as sc

K_B, Q = sc.k, sc.e


def mp_fermi_half(eta):
    return -mp.re(mp.polylog(mp.mpf(1.5), -mp.exp(eta)))


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
            total = Nc * mp_fermi_half(eta) - Nv * mp_fermi_half(eta_p)
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
