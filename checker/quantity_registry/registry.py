"""Every quantity regimecheck knows, once: its name, meaning, display unit (which fixes its
dimension), how it is produced, whether it exists per carrier, where a calculation file
may state it, and its trade symbols in stated formulas.

The rule vocabulary (engine/vocabulary.py), the ``structure:`` and ``stated:`` keys of
calculation files (inputs/calculation_file.py, and so the JSON Schema), the formula
symbols' values at the operating point (engine/formulas/check.py) and the trade summary
(summary_fields.py) are views of this table; tests check that the solve produces exactly
the quantities registered here.

Names ending in ``_x`` exist per carrier: ``dens_x`` stands for ``dens_n`` (electrons) and
``dens_p`` (holes); a rule reads it per carrier, also as ``dens_o`` (the other carrier).
Per-carrier keys and symbols are pairs, electrons first.
"""

from __future__ import annotations

from enum import StrEnum
from typing import Any

from ..physics.constants import BOLTZMANN, ELEMENTARY_CHARGE
from ..records import FrozenRecord
from ..vocabulary_words import Carrier
from .display_units import BULK_UNITS, DISPLAY_UNITS, UNIT_KINDS


class Source(StrEnum):
    """Where a quantity's value comes from."""

    SOLVE = "solve"  # the Fermi–Dirac solve and the material's models
    INPUTS = "inputs"  # the calculation's structure (and what it implies)
    STATED = "stated"  # a number the author states
    DERIVED = "derived"  # computed from the above after the solve
    CONSTANT = "constant"  # a physical constant
    TEXT = "text"  # words, not numbers (model names, the regime)


TEXT_UNIT = "text"  # the "unit" of a word-valued quantity


class Quantity(FrozenRecord):
    name: str  # engine name; "<stem>_x" per carrier
    unit: str  # display unit (DISPLAY_UNITS); TEXT_UNIT for words; SI for a constant
    meaning: str  # as rule authors read it (regimecheck explain)
    source: Source
    section: str | None = None  # "stated" or "structure": where a calculation gives it
    keys: tuple[str, ...] = ()  # its YAML key(s) in that section (electrons', holes')
    symbols: tuple[str, ...] = ()  # its trade symbol(s) in stated formulas (electrons', holes')
    in_rules: bool = True  # False: only the reader (or the state command) uses it
    signed: bool = False  # a stated value may be negative
    value: float | None = None  # a constant's value (SI)

    @property
    def per_carrier(self) -> bool:
        return self.name.endswith("_x")

    @property
    def kind(self) -> str:
        """The dimension a calculation file's text is read in (inputs/quantities)."""
        return _READ_AS[self.unit]

    def concrete(self, carrier: Carrier | None = None) -> str:
        """The name for ``carrier`` (``dens_x`` -> ``dens_n``); the name itself if common."""
        return f"{self.name[:-2]}_{carrier}" if self.per_carrier else self.name

    def carriers(self) -> tuple[tuple[Carrier | None, str], ...]:
        """(carrier or None, concrete name) of each form the values carry."""
        if self.per_carrier:
            return tuple((c, self.concrete(c)) for c in Carrier)
        return ((None, self.name),)

    @property
    def bulk(self) -> bool:
        """A value of the 3D solve that is no sheet or line quantity."""
        return self.unit in BULK_UNITS


# sheet and line densities are read only by the keys of the sheet and wire solves (bulk keys
# refuse cm^-2 and cm^-1)
_READ_AS = {**UNIT_KINDS, "cm^-2": "sheet density", "cm^-1": "line density"}


def _q(name: str, unit: str, meaning: str, source: Source = Source.SOLVE, **more: Any) -> Quantity:
    return Quantity(name, unit, meaning, source, **more)


def _stated(name: str, unit: str, meaning: str, keys: tuple[str, ...], **more: Any) -> Quantity:
    return Quantity(name, unit, meaning, Source.STATED, section="stated", keys=keys, **more)


def _structure(
    name: str, unit: str, meaning: str, key: str, source: Source = Source.INPUTS, **more: Any
) -> Quantity:
    return Quantity(name, unit, meaning, source, section="structure", keys=(key,), **more)


_D, _S, _T = Source.DERIVED, Source.SOLVE, Source.TEXT

QUANTITIES = (
    # ---- the solve and the material's models, one value per point --------------------------
    _q("T", "K", "temperature", symbols=("T",)),
    _q("kT", "eV", "thermal energy k*T (J inside)"),
    _q("kT_q", "V", "thermal voltage k*T/q"),
    _q(
        "Eg",
        "eV",
        "band gap at T (J inside; narrowed when band_gap_narrowing is on)",
        symbols=("E_g",),
    ),
    _q(
        "ni",
        "cm^-3",
        "intrinsic density sqrt(N_c N_v) exp(-E_g/2kT) of the undoped crystal",
        symbols=("n_i",),
    ),
    _q(
        "nie",
        "cm^-3",
        "effective intrinsic density of the solve: n_i exp(ΔE_g/2kT) with band-gap "
        "narrowing on, n_i otherwise",
    ),
    _q(
        "ni_lo",
        "cm^-3",
        "lowest published n_i at T (the material's 300 K spread carried to T "
        "by the model; the model value where no spread is tabulated)",
    ),
    _q("ni_hi", "cm^-3", "highest published n_i at T (as ni_lo)"),
    _q("Nnet", "cm^-3", "net doping |N_D - N_A|"),
    _q("Ntot", "cm^-3", "total dopant density N_D + N_A"),
    _q("T_onset", "K", "temperature where n_i reaches 10 % of the net doping"),
    _q("dEg_bgn", "eV", "band-gap narrowing of the material's model at this doping (J inside)"),
    _q("bgn_on", "1", "1 where band-gap narrowing was applied in the solve"),
    _q("T_lo", "K", "lowest temperature inside every model's fitted range"),
    _q("T_hi", "K", "highest temperature inside every model's fitted range"),
    _q("N_lo", "cm^-3", "lowest doping inside the mobility models' fitted range"),
    _q("N_hi", "cm^-3", "highest doping inside the mobility models' fitted range"),
    _structure(
        "dim", "1", "dimensionality of the conductor (3, 2 or 1)", "dimensionality", source=_S
    ),
    _q(
        "residual",
        "1",
        "relative charge-neutrality residual of the solve (the state command shows it)",
        in_rules=False,
    ),
    # ---- the solve, per carrier ---------------------------------------------------------------
    _q(
        "eta_x",
        "1",
        "reduced Fermi level of the carrier: (E_F - E_C)/kT or (E_V - E_F)/kT",
        symbols=("eta_n", "eta_p"),
    ),
    _q("dens_x", "cm^-3", "carrier density (Fermi–Dirac solve)", symbols=("n", "p")),
    _q(
        "Nband_x",
        "cm^-3",
        "effective density of states of the carrier's band",
        symbols=("N_c", "N_v"),
    ),
    _q(
        "N_x",
        "cm^-3",
        "dopants that give this carrier (donors for electrons)",
        symbols=("N_D", "N_A"),
    ),
    _q("Ncomp_x", "cm^-3", "dopants of the other type (compensating)"),
    _q("Nion_x", "cm^-3", "ionized density of N_x", symbols=("N_D_plus", "N_A_minus")),
    _q("f_x", "1", "ionized fraction of N_x (1 where there are none)", symbols=("f_D", "f_A")),
    _q("mott_x", "cm^-3", "lowest Mott density among the species of N_x (inf: none)"),
    _q(
        "Eion_x",
        "eV",
        "ionization energy of the main species of N_x (J inside)",
        symbols=("dE_D", "dE_A"),
    ),
    _q(
        "gdeg_x",
        "1",
        "ground-state degeneracy factor of the main species of N_x",
        symbols=("g_D", "g_A"),
    ),
    _q("rH_lo_x", "1", "lowest measured Hall factor of the carrier at T (NaN: none tabulated)"),
    _q("rH_hi_x", "1", "highest measured Hall factor of the carrier at T (NaN: none tabulated)"),
    _q("metal_x", "1", "1 where N_x is above its Mott density"),
    _q("maj_x", "1", "1 where this carrier is the majority"),
    _q("mu_x", "cm^2/(V*s)", "low-field mobility of the material model at N_D + N_A"),
    # ---- mobilities typically measured in the material's channels (a plausibility range)
    _q(
        "mu_typ_lo_x",
        "cm^2/(V*s)",
        "lowest mobility typically measured in the channels at mu_typ_T (NaN: no range)",
        Source.INPUTS,
    ),
    _q(
        "mu_typ_hi_x",
        "cm^2/(V*s)",
        "highest mobility typically measured in the channels at mu_typ_T (NaN: no range)",
        Source.INPUTS,
    ),
    _q(
        "mu_typ_T",
        "K",
        "temperature of the material's typical mobility range (NaN: no range)",
        Source.INPUTS,
    ),
    _q(
        "mu0_x",
        "cm^2/(V*s)",
        "lattice-limited mobility (highest of the material's published fits at N = 0)",
    ),
    _q(
        "cond_x",
        "1",
        "conduction credit: 1/(ionized fraction at the fit temperature) for a "
        "mobility given per dopant atom (the silicon resistivity standard), else 1",
    ),
    _q("vsat_x", "cm/s", "saturation velocity", symbols=("v_sat_n", "v_sat_p")),
    _q("beta_x", "1", "Caughey–Thomas field exponent", symbols=("beta_n", "beta_p")),
    _q("vth_x", "cm/s", "unidirectional thermal velocity <v_x+> (Fermi–Dirac)"),
    _q("lambda_model_x", "nm", "backscattering mean free path 2D/<v_x+> at the model mobility"),
    _q(
        "dens_bgn_x",
        "cm^-3",
        "carrier density of a solve with the material's band-gap narrowing (dens_x where "
        "narrowing is on already, the material has no narrowing model, or it shifts n_i² by "
        "less than 1 %)",
    ),
    # ---- non-parabolic bulk bands (BAND01; state_values._band_shape_values) ---------------------
    _q(
        "beta_kane_x",
        "1",
        "alpha kT of the carrier's bulk Kane band, E(1 + alpha E) = hbar^2 k^2/2m* "
        "(0: a parabolic band)",
    ),
    _q(
        "eta_par_x",
        "1",
        "reduced Fermi level a parabolic band (n = N_c F_1/2(eta)) gives for the solved "
        "density (eta_x where the band is parabolic)",
    ),
    _q(
        "dens_par_x",
        "cm^-3",
        "density a parabolic band, N_c F_1/2(eta), holds at the solved Fermi level "
        "(dens_x where the band is parabolic)",
    ),
    # ---- words ----------------------------------------------------------------------------------
    _q("regime", TEXT_UNIT, "regime of the operating point", _T),
    _q("T_models", TEXT_UNIT, "models whose fitted temperature range the point leaves", _T),
    _q("N_models", TEXT_UNIT, "mobility models whose fitted doping range the point exceeds", _T),
    # ---- the structure of the conductor ---------------------------------------------------------
    _structure("L", "um", "conductor length", "length", symbols=("L",)),
    _structure("A", "um^2", "cross-section (thickness x width)", "cross_section", symbols=("A",)),
    _structure("thickness", "um", "layer thickness", "thickness", symbols=("t",)),
    _structure("width", "um", "conductor width", "width", symbols=("W",)),
    _structure("field", "kV/cm", "applied field (or voltage/length)", "field", symbols=("E",)),
    _structure("voltage", "V", "applied voltage", "voltage", in_rules=False),
    # ---- numbers the author states (in the order the schema lists them) -------------------------
    _stated(
        "stated_dens_x", "cm^-3", "stated carrier density", ("electron_density", "hole_density")
    ),
    _stated(
        "stated_ef_minus_ec",
        "eV",
        "stated Fermi level E_F - E_C",
        ("ef_minus_ec",),
        in_rules=False,
        signed=True,
    ),
    _stated(
        "stated_ef_minus_ev",
        "eV",
        "stated Fermi level E_F - E_V",
        ("ef_minus_ev",),
        in_rules=False,
        signed=True,
    ),
    _stated("stated_mu_x", "cm^2/(V*s)", "stated mobility", ("electron_mobility", "hole_mobility")),
    _stated(
        "stated_D_x",
        "cm^2/s",
        "stated diffusion coefficient",
        ("electron_diffusivity", "hole_diffusivity"),
    ),
    _stated("stated_v_x", "cm/s", "stated drift velocity", ("electron_velocity", "hole_velocity")),
    _stated(
        "stated_sigma", "S/cm", "stated conductivity (or 1/stated resistivity)", ("conductivity",)
    ),
    _stated(
        "stated_rho", "ohm*cm", "stated resistivity (or 1/stated conductivity)", ("resistivity",)
    ),
    _stated("stated_Rsh", "ohm/sq", "stated sheet resistance", ("sheet_resistance",)),
    _stated("stated_R", "ohm", "stated resistance", ("resistance",)),
    _stated("stated_kT_q", "V", "stated thermal voltage", ("thermal_voltage",)),
    _stated("stated_ni", "cm^-3", "stated intrinsic density", ("intrinsic_density",)),
    _stated(
        "stated_Nband_x",
        "cm^-3",
        "stated effective density of states of the carrier's band",
        ("conduction_dos", "valence_dos"),
    ),
    _stated("stated_lambda", "nm", "stated mean free path", ("mean_free_path",)),
    _stated("stated_hall", "cm^-3", "stated Hall density 1/(q|R_H|)", ("hall_density",)),
    # ---- computed after the solve from the solve and the inputs ---------------------------------
    _q(
        "stated_eta_x",
        "1",
        "stated Fermi level as a reduced Fermi level of this carrier",
        _D,
    ),
    _q(
        "stated_ef_x",
        "eV",
        "stated Fermi level relative to this carrier's band edge (J inside)",
        _D,
    ),
    _q("in_use_x", "1", "1 where the calculation uses this carrier", _D),
    _q(
        "used_mu_x",
        "cm^2/(V*s)",
        "mobility of the corrected calculation: the stated one unless a rule rejects it "
        "(replaces:), else the model's",
        _D,
        symbols=("mu_n", "mu_p"),
    ),
    _q(
        "lambda_x",
        "nm",
        "backscattering mean free path 2D/<v_x+> at the mobility of the corrected calculation",
        _D,
        symbols=("lambda_n", "lambda_p"),
    ),
    _q(
        "sigma",
        "S/cm",
        "two-carrier conductivity q(n mu_n + p mu_p), stated mobilities where given",
        _D,
        symbols=("sigma",),
    ),
    _q("rho", "ohm*cm", "resistivity 1/sigma", _D, symbols=("rho",)),
    _q(
        "used_rho",
        "ohm*cm",
        "resistivity of the corrected calculation: the stated one (or 1/stated conductivity) "
        "unless a rule rejects it (replaces:), else rho",
        _D,
    ),
    _q(
        "sigma_model",
        "S/cm",
        "conductivity the doping gives: q(n mu_n + p mu_p) with the model "
        "mobilities and each carrier's conduction credit",
        _D,
    ),
    _q("hall_r", "1", "exponent r of tau ∝ E^r used for the Hall factor", _D),
    _q("rH_x", "1", "Hall scattering factor <tau^2>/<tau>^2 of the carrier (Fermi–Dirac)", _D),
    _q(
        "n_hall",
        "cm^-3",
        "Hall density 1/(q|R_H|) the solve and the mobility model predict "
        "(two carriers, Hall factors)",
        _D,
    ),
    _q(
        "n_hall_lo",
        "cm^-3",
        "lowest expected Hall density over the measured Hall-factor range "
        "(the model's Hall factor +-5 % where none is tabulated)",
        _D,
    ),
    _q(
        "n_hall_hi",
        "cm^-3",
        "highest expected Hall density over the measured Hall-factor range",
        _D,
    ),
    # ---- sheets and 2D gases, graphene (engine/regime/sheet_values.py) -------------------------
    # The sheet solve leaves the bulk quantities (cm^-3, S/cm, ohm*cm) unknown: its densities
    # are per area and carry their own names, so no report prints a sheet value in a bulk unit.
    _q(
        "ns_x",
        "cm^-2",
        "sheet density of the carrier (2D statistics of the material's sheet bands; "
        "NaN in a bulk calculation)",
        symbols=("n_s", "p_s"),
    ),
    _q(
        "N2D_x",
        "cm^-2",
        "effective density of states of the carrier's lowest 2D subband, "
        "g_v m* kT/(pi hbar^2); for a linear band (g_s g_v/2 pi)(kT/hbar v_F)^2",
    ),
    _q(
        "einstein_x",
        "1",
        "generalized Einstein ratio (D/mu)/(kT/q) = n/(dn/deta) of the carrier's bands "
        "(energy window: every subband, linear bands, a Kane bulk band where the material "
        "gives α; the parabolic F_j ratio otherwise)",
    ),
    _q("ni_s", "cm^-2", "intrinsic sheet density of a zero-gap sheet, n = p at E_F = E_D"),
    _q("linear", "1", "1 where the bands are linear and zero-gap (graphene), else 0"),
    _q("vF", "cm/s", "Fermi velocity of a linear band", symbols=("v_F",)),
    _q("subbands", "1", "number of 2D subbands in the sheet solve (0: bulk solve)"),
    _stated(
        "stated_ns_x",
        "cm^-2",
        "stated carrier sheet density",
        ("electron_sheet_density", "hole_sheet_density"),
    ),
    _stated(
        "stated_net_sheet",
        "cm^-2",
        "stated net sheet density n - p of a zero-gap sheet (gate-induced: C_g (V_g - V_D)/q)",
        ("net_sheet_density",),
        signed=True,
    ),
    _q(
        "sigma_s",
        "S",
        "sheet conductance q(n_s mu_n + p_s mu_p) of the corrected calculation",
        _D,
    ),
    _q("Rs", "ohm/sq", "sheet resistance 1/sigma_s of the corrected calculation", _D),
    # ---- 1D conductors: nanowires, quantum wires (engine/regime/sheet_values.py) ---------------
    # Per length, under names of their own: like a sheet's, a wire's densities never reach a
    # bulk (cm^-3) or sheet (cm^-2) quantity.
    _q(
        "nl_x",
        "cm^-1",
        "line density of the carrier (1D statistics of the material's wire subbands; "
        "NaN unless the calculation is 1D)",
    ),
    _q(
        "N1D_x",
        "cm^-1",
        "effective density of states of the carrier's lowest 1D subband, "
        "g_v sqrt(2 m* kT/(pi hbar^2)) (spin included; a Kane subband's at its edge mass)",
    ),
    _q(
        "modes_1d_x",
        "1",
        "conducting modes of the carrier's 1D subbands in the energy window, a count: "
        "<M> = ∫ M(E)(-df/dE) dE as 2q^2/h counts them (NaN unless 1D)",
    ),
    _stated(
        "stated_nl_x",
        "cm^-1",
        "stated carrier line density of a 1D conductor",
        ("electron_line_density", "hole_line_density"),
    ),
    # ---- ballistic and quasi-ballistic conductors (LAND01) -------------------------------------
    _q(
        "modes_w_x",
        "cm^-1",
        "conducting modes per width of the carrier's sheet bands in the energy window, "
        "<M> = ∫ M(E)(-df/dE) dE as 2q^2/h counts them (NaN in a bulk calculation)",
    ),
    _q(
        "modes",
        "1",
        "conducting modes of the conductor: the stated count (structure: modes) where given, "
        "else (modes_w_n + modes_w_p) times the width of a sheet, (modes_a_n + modes_a_p) "
        "times the cross-section of a bulk conductor, or modes_1d_n + modes_1d_p of a wire",
        _D,
    ),
    _q(
        "G_ballistic",
        "S",
        "ballistic limit of the conductor, 2q^2/h (exact, SI 2019) times its modes",
        _D,
    ),
    _q(
        "G_landauer",
        "S",
        "Landauer conductance of the conductor: G_energy where known, else the averaged-lambda "
        "value, the sum over the carriers of (2q^2/h) W <M> lambda/(lambda + L) (sheet) or "
        "sigma A/(L + lambda) (bulk), lambda_x of the corrected calculation",
        _D,
    ),
    # ---- energy-resolved Landauer value, bulk modes, a stated mode count (conductor_values) ----
    _q(
        "modes_a_x",
        "cm^-2",
        "conducting modes per cross-section of the carrier's bulk bands in the energy window, "
        "<M> = ∫ M(E)(-df/dE) dE as 2q^2/h counts them, where the calculation gives a "
        "cross-section (NaN otherwise and in a sheet)",
    ),
    _q(
        "kpower_x",
        "1",
        "power p of k^2 ∝ E^p of the carrier's bands (1 parabolic, 2 linear); NaN where no "
        "single power law describes them (a Kane band, several subbands)",
    ),
    _q(
        "G_energy",
        "S",
        "energy-resolved Landauer conductance (2q^2/h) ∫ M T (-df/dE) dE times the width or "
        "cross-section, T = lambda(E)/(lambda(E) + L), lambda(E) = lambda_0 (E/kT)^r with r "
        "from the Hall exponent and lambda_0 from the conductivity used; NaN where no single "
        "power-law band describes a carrier",
        _D,
    ),
    _structure(
        "modes_given",
        "1",
        "stated number of conducting modes of the conductor (each carries at most 2q^2/h)",
        "modes",
    ),
    _stated("stated_G", "S", "stated conductance of the conductor", ("conductance",)),
    # ---- constants (CODATA 2022, physics/constants.py) ------------------------------------------
    # (their SI units: constants are never shown in a display unit)
    _q("q", "C", "elementary charge", Source.CONSTANT, symbols=("q",), value=ELEMENTARY_CHARGE),
    _q("k", "J/K", "Boltzmann constant", Source.CONSTANT, symbols=("k",), value=BOLTZMANN),
)

BY_NAME = {quantity.name: quantity for quantity in QUANTITIES}


def registered(name: str) -> Quantity | None:
    """The quantity of a concrete name (``dens_n``, ``dens_o``, ``T``), or None."""
    found = BY_NAME.get(name)
    if found is None and name[-2:] in ("_n", "_p", "_o"):
        found = BY_NAME.get(name[:-2] + "_x")
    return found


def value_names() -> set[str]:
    """The concrete names of every quantity the solve lays out for rules (constants and
    words included): what engine/regime/state_values.py must produce."""
    return {name for quantity in QUANTITIES if quantity.in_rules for _, name in quantity.carriers()}


def file_keys(section: str) -> dict[str, tuple[str, str]]:
    """YAML key -> (engine name, dimension read as) of a calculation file's section, in
    the table's order (the reader's error messages and the schema list them so)."""
    out: dict[str, tuple[str, str]] = {}
    for quantity in QUANTITIES:
        if quantity.section == section:
            for key, (_, name) in zip(quantity.keys, quantity.carriers(), strict=True):
                out[key] = (name, quantity.kind)
    return out


def formula_symbols() -> dict[str, str]:
    """Trade symbol of a stated formula -> the concrete quantity name that gives its value."""
    return {
        symbol: name
        for quantity in QUANTITIES
        if quantity.symbols
        for symbol, (_, name) in zip(quantity.symbols, quantity.carriers(), strict=True)
    }


def _check_table() -> None:
    """Refuse a malformed row at import (a programming error, not user input)."""
    for quantity in QUANTITIES:
        forms = len(quantity.carriers())
        shown = quantity.source is not Source.CONSTANT and quantity.unit != TEXT_UNIT
        assert quantity.unit in DISPLAY_UNITS or not shown, quantity.name
        assert len(quantity.keys) in (0, forms), quantity.name
        assert len(quantity.symbols) in (0, forms), quantity.name
        assert bool(quantity.keys) == (quantity.section is not None), quantity.name
    assert len(BY_NAME) == len(QUANTITIES), "a quantity is registered twice"


_check_table()
