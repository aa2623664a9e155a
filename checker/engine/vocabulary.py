"""Names a rule expression may use, what they mean, and how they are shown.

Values are SI inside.  Names ending in ``_x`` exist per carrier: a rule that
runs per carrier is compiled twice, once with ``_x`` read as ``_n`` (``_o`` as
``_p``, the other carrier) and once the other way round.  A stated number the
author did not give is NaN; ``present(name)`` and ``stated_or(name, fallback)``
test for it.
"""

from __future__ import annotations

from functools import cache

from ..physics.constants import BOLTZMANN, ELECTRON_MASS, ELEMENTARY_CHARGE, EV

# display unit -> factor from SI
DISPLAY_UNITS = {
    "1": 1.0,
    "%": 100.0,
    "K": 1.0,
    "eV": 1.0 / EV,
    "V": 1.0,
    "cm^-3": 1e-6,
    "cm^2/(V*s)": 1e4,
    "cm^2/s": 1e4,
    "cm/s": 100.0,
    "kV/cm": 1e-5,
    "ohm*cm": 100.0,
    "S/cm": 0.01,
    "ohm": 1.0,
    "ohm/sq": 1.0,
    "nm": 1e9,
    "um": 1e6,
    "cm^-2": 1e-4,
    "cm^-1": 1e-2,
    "cm^-6": 1e-12,
    "cm^-4": 1e-8,
    "um^2": 1e12,
    "A/cm^2": 1e-4,
    "S": 1.0,
    "m0": 1.0 / ELECTRON_MASS,
    "ohm*cm^2": 1e4,
    "ns": 1e9,
}

CONSTANTS = {"q": ELEMENTARY_CHARGE, "k": BOLTZMANN}

# name -> (display unit, meaning)
COMMON = {
    "T": ("K", "temperature"),
    "kT": ("eV", "thermal energy k*T (J inside)"),
    "kT_q": ("V", "thermal voltage k*T/q"),
    "Eg": ("eV", "band gap at T (J inside; narrowed when band_gap_narrowing is on)"),
    "ni": ("cm^-3", "intrinsic density sqrt(N_c N_v) exp(-E_g/2kT)"),
    "ni_lo": (
        "cm^-3",
        "lowest published n_i at T (the material's 300 K spread carried to T "
        "by the model; the model value where no spread is tabulated)",
    ),
    "ni_hi": ("cm^-3", "highest published n_i at T (as ni_lo)"),
    "Nnet": ("cm^-3", "net doping |N_D - N_A|"),
    "Ntot": ("cm^-3", "total dopant density N_D + N_A"),
    "T_onset": ("K", "temperature where n_i reaches 10 % of the net doping"),
    "dEg_bgn": ("eV", "band-gap narrowing of the material's model at this doping (J inside)"),
    "bgn_on": ("1", "1 where band-gap narrowing was applied in the solve"),
    "T_lo": ("K", "lowest temperature inside every model's fitted range"),
    "T_hi": ("K", "highest temperature inside every model's fitted range"),
    "N_lo": ("cm^-3", "lowest doping inside the mobility models' fitted range"),
    "N_hi": ("cm^-3", "highest doping inside the mobility models' fitted range"),
    "dim": ("1", "dimensionality of the conductor (3, 2 or 1)"),
    "L": ("um", "conductor length"),
    "A": ("um^2", "cross-section (thickness x width)"),
    "thickness": ("um", "layer thickness"),
    "field": ("kV/cm", "applied field (or voltage/length)"),
    "sigma": ("S/cm", "two-carrier conductivity q(n mu_n + p mu_p), stated mobilities where given"),
    "rho": ("ohm*cm", "resistivity 1/sigma"),
    "sigma_model": (
        "S/cm",
        "conductivity the doping gives: q(n mu_n + p mu_p) with the model "
        "mobilities and each carrier's conduction credit",
    ),
    "stated_kT_q": ("V", "stated thermal voltage"),
    "stated_ni": ("cm^-3", "stated intrinsic density"),
    "stated_sigma": ("S/cm", "stated conductivity (or 1/stated resistivity)"),
    "stated_rho": ("ohm*cm", "stated resistivity (or 1/stated conductivity)"),
    "stated_Rsh": ("ohm/sq", "stated sheet resistance"),
    "stated_R": ("ohm", "stated resistance"),
    "stated_lambda": ("nm", "stated mean free path"),
    "stated_hall": ("cm^-3", "stated Hall density 1/(q|R_H|)"),
    "n_hall": (
        "cm^-3",
        "Hall density 1/(q|R_H|) the solve and the mobility model predict "
        "(two carriers, Hall factors)",
    ),
    "n_hall_lo": (
        "cm^-3",
        "lowest expected Hall density over the measured Hall-factor range "
        "(the model's Hall factor +-5 % where none is tabulated)",
    ),
    "n_hall_hi": ("cm^-3", "highest expected Hall density over the measured Hall-factor range"),
    "hall_r": ("1", "exponent r of tau ∝ E^r used for the Hall factor"),
}
PER_CARRIER = {
    "eta_x": ("1", "reduced Fermi level of the carrier: (E_F - E_C)/kT or (E_V - E_F)/kT"),
    "dens_x": ("cm^-3", "carrier density (Fermi–Dirac solve)"),
    "Nband_x": ("cm^-3", "effective density of states of the carrier's band"),
    "N_x": ("cm^-3", "dopants that give this carrier (donors for electrons)"),
    "Ncomp_x": ("cm^-3", "dopants of the other type (compensating)"),
    "Nion_x": ("cm^-3", "ionized density of N_x"),
    "f_x": ("1", "ionized fraction of N_x (1 where there are none)"),
    "mott_x": ("cm^-3", "lowest Mott density among the species of N_x (inf: none)"),
    "Eion_x": ("eV", "ionization energy of the main species of N_x (J inside)"),
    "gdeg_x": ("1", "ground-state degeneracy factor of the main species of N_x"),
    "rH_x": ("1", "Hall scattering factor <tau^2>/<tau>^2 of the carrier (Fermi–Dirac)"),
    "rH_lo_x": ("1", "lowest measured Hall factor of the carrier at T (NaN: none tabulated)"),
    "rH_hi_x": ("1", "highest measured Hall factor of the carrier at T (NaN: none tabulated)"),
    "metal_x": ("1", "1 where N_x is above its Mott density"),
    "maj_x": ("1", "1 where this carrier is the majority"),
    "in_use_x": ("1", "1 where the calculation uses this carrier"),
    "mu_x": ("cm^2/(V*s)", "low-field mobility of the material model at N_D + N_A"),
    "used_mu_x": ("cm^2/(V*s)", "mobility the calculation uses: the stated one, else the model's"),
    "mu0_x": (
        "cm^2/(V*s)",
        "lattice-limited mobility (highest of the material's published fits at N = 0)",
    ),
    "cond_x": (
        "1",
        "conduction credit: 1/(ionized fraction at the fit temperature) for a "
        "mobility given per dopant atom (the silicon resistivity standard), else 1",
    ),
    "vsat_x": ("cm/s", "saturation velocity"),
    "beta_x": ("1", "Caughey–Thomas field exponent"),
    "vth_x": ("cm/s", "unidirectional thermal velocity <v_x+> (Fermi–Dirac)"),
    "lambda_x": ("nm", "backscattering mean free path 2D/<v_x+> at the mobility used"),
    "stated_dens_x": ("cm^-3", "stated carrier density"),
    "stated_eta_x": ("1", "stated Fermi level as a reduced Fermi level of this carrier"),
    "stated_ef_x": ("eV", "stated Fermi level relative to this carrier's band edge (J inside)"),
    "stated_mu_x": ("cm^2/(V*s)", "stated mobility"),
    "stated_D_x": ("cm^2/s", "stated diffusion coefficient"),
    "stated_v_x": ("cm/s", "stated drift velocity"),
    "stated_Nband_x": ("cm^-3", "stated effective density of states of the carrier's band"),
}
for _name, (_unit, _meaning) in list(PER_CARRIER.items()):
    PER_CARRIER[_name[:-2] + "_o"] = (
        _unit,
        _meaning.replace("the carrier", "the other carrier").replace(
            "this carrier", "the other carrier"
        ),
    )

# quantities that are words, not numbers (object arrays; a rule shows them with {text: name})
TEXT = {
    "regime": "regime of the operating point",
    "T_models": "models whose fitted temperature range the point leaves",
    "N_models": "mobility models whose fitted doping range the point exceeds",
}

CARRIER_WORDS = {"n": ("electrons", "donors", "electron"), "p": ("holes", "acceptors", "hole")}


def carrier_names(x: str) -> dict:
    """Map ``name_x``/``name_o`` to the concrete names for carrier ``x`` ("n" or "p")."""
    other = "p" if x == "n" else "n"
    mapping = {}
    for name in PER_CARRIER:
        stem, suffix = name[:-2], name[-1]
        mapping[name] = f"{stem}_{x if suffix == 'x' else other}"
    return mapping


@cache
def rule_names() -> frozenset:
    """Every name a rule expression may use: the ``_x``/``_o`` forms (expanded per
    carrier) and the concrete ``_n``/``_p`` ones (e.g. dens_n in a per-calculation rule)."""
    return (
        frozenset(COMMON)
        | frozenset(PER_CARRIER)
        | frozenset(CONSTANTS)
        | frozenset(concrete_names())
    )


def concrete_names() -> set:
    names = set(COMMON) | set(CONSTANTS)
    for x in ("n", "p"):
        names |= set(carrier_names(x).values())
    return names
