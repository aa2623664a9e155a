"""Independent reference computations for the tests (multiple precision, written
out from the published formulas; they share no code with the package)."""
import mpmath as mp
import scipy.constants as sc

K_B, Q = sc.k, sc.e


def mp_fermi_half(eta):
    return -mp.re(mp.polylog(mp.mpf(1.5), -mp.exp(eta)))


def reference_solve(material, T, donors, acceptors):
    """Independent solve in 40-digit arithmetic: bisection on the plain
    (not logarithmic) neutrality equation n + N_A^- - p - N_D^+ = 0.

    Band and dopant numbers are taken from the material (they are data); the
    statistics are written out here from Sze & Ng (2007), ch. 1:
    N_D^+ = N_D / (1 + 2 e^((E_F - E_D)/kT)), N_A^- = N_A / (1 + 4 e^((E_A - E_F)/kT)),
    full ionization where the same-type total reaches the Mott density.
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
                d = material.dopant(name)
                full = na_tot >= d.mott_density
                total += N if full else N / (1 + d.degeneracy * mp.exp(eta_p + mp.mpf(d.energy) / kT))
            for name, N in donors.items():
                d = material.dopant(name)
                full = nd_tot >= d.mott_density
                total -= N if full else N / (1 + d.degeneracy * mp.exp(eta + mp.mpf(d.energy) / kT))
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
