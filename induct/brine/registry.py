"""Solute registry: one record per salt, holding everything the brine models need about it.

Each solute (seawater, NaCl, MgSO4, KCl) is one frozen :class:`Solute` record:
its name and aliases, salinity scale (unit, label, conversion to mass
fraction), molar mass and ions, the conductivity and freezing-point model
callables with their coefficients, the extrapolation-flag hook, the validity
limits (temperature, pressure, salinity, saturation table, reference range
without flags) and the sources. :data:`SOLUTES` maps the names to the
records (iterating it gives the names, in registration order);
:func:`get_solute` finds a record by name or alias, case-insensitively.
:mod:`induct.brine.api`, the kernels (:mod:`~induct.brine.freezing`,
:mod:`~induct.brine.solutions`, :mod:`~induct.brine.limits`,
:mod:`~induct.brine.extrapolation`), the ``induct brine`` command and the
ocean profiles (:mod:`induct.model.ocean`) read all solute-specific data
from here; none of them branches on a solute's name.

How to add a solute
-------------------
Add one record at the end of this module (``_BUILTIN``), e.g. for a
single-salt brine copy the ``KCl`` record and change its values:

1. ``name``, ``aliases`` (checked for clashes, case-insensitively),
   ``molar_mass_kg_per_mol`` and ``ions`` (:class:`Ion`: McCleskey ion name,
   signed charge, count per formula unit).
2. Conductivity (``conductivity_model=solutions.brine_conductivity``):
   ``apparent_molar_volume`` (Masson V0, S_v), ``concentrated_factor`` (g, h;
   fit them with :func:`induct.brine.solutions.fit_concentrated_factor` from
   the ``conductivity_calibration`` points), ``ion_pairing`` if the salt
   associates (2:2 salts). Ions missing from
   :data:`induct.brine.solutions.MCCLESKEY_IONS` go there (the only data-module
   edit, and only for new ions).
3. Freezing point (``freezing_model=freezing.brine_freezing_point``):
   ``freezing_depression`` (:func:`~induct.brine.freezing.pitzer_depression`
   with ``pitzer`` parameters, or your own callable ``(solute, w) -> K``) and
   ``eutectic_mass_fraction``.
4. ``limits``: temperature and pressure ranges, reference range (points
   outside it are flagged), saturation table (mass fractions; a leading
   ``None`` temperature means "the eutectic, from the freezing model").
5. ``sources``, ``description``, ``reference_point``.

Nothing else changes: :func:`induct.brine.conductivity`,
:func:`induct.brine.freezing_point`, the CLI (``--solute``) and chemistry
layers of scenarios accept the new name at once. ``register_solute`` checks
the record (:meth:`Solute.problems`); ``tests/brine/test_solute_registry.py``
checks every registered record. A record can also be registered at run time
(:func:`register_solute`, :func:`unregister_solute`), e.g. in a test.

Examples
--------
>>> from induct.brine.registry import SOLUTES, get_solute
>>> list(SOLUTES)
['seawater', 'NaCl', 'MgSO4', 'KCl']
>>> rec = get_solute("mgso4")
>>> rec.name, rec.salinity.label, rec.molar_mass_kg_per_mol
('MgSO4', 'g/kg', 0.1203676)
>>> [ion.name for ion in rec.ions]
['Mg2+', 'SO4 2-']
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, fields

from induct.brine.names import SOLUTES, SoluteRegistry, get_solute
from induct.brine import extrapolation
from induct.brine import freezing
from induct.brine import limits as _limits
from induct.brine import seawater
from induct.brine import solutions

__all__ = [
    "G_PER_KG",
    "PRACTICAL_SALINITY",
    "SOLUTES",
    "Ion",
    "IonPairing",
    "Limits",
    "PitzerParams",
    "SalinityScale",
    "Solute",
    "SoluteRegistry",
    "get_solute",
    "register_solute",
    "unregister_solute",
]


# ----------------------------------------------------------------------------
# Record types
# ----------------------------------------------------------------------------
@dataclass(frozen=True)
class SalinityScale:
    """How a solute's salinity is given at the user boundary.

    Attributes
    ----------
    unit : str
        Unit as written in error messages, e.g. ``"g/kg"``.
    label : str
        Short label for table headers, e.g. ``"SP"``.
    meaning : str
        One-line description (CLI units, JSON output).
    to_mass_fraction : float
        Mass fraction of solute (kg/kg) per salinity unit.
    from_mass_fraction : float
        Salinity units per unit mass fraction (``1 / to_mass_fraction``; both are
        stored so that the conversions multiply by the same constants as before).
    """

    unit: str
    label: str
    meaning: str
    to_mass_fraction: float
    from_mass_fraction: float


#: Salinity in grams of anhydrous salt per kilogram of solution.
G_PER_KG = SalinityScale("g/kg", "g/kg", "g of anhydrous salt per kg of solution", 1e-3, 1e3)
#: Practical Salinity (PSS-78); reference-composition mass fraction SA = 35.16504/35 SP g/kg (Millero et al. 2008).
PRACTICAL_SALINITY = SalinityScale(
    "(Practical Salinity)", "SP", "Practical Salinity (PSS-78, dimensionless; SA = 35.16504/35 SP g/kg)",
    freezing.SA_PER_SP * 1e-3, 1e3 / freezing.SA_PER_SP)


@dataclass(frozen=True)
class Ion:
    """One ion of a salt.

    Attributes
    ----------
    name : str
        Key in :data:`induct.brine.solutions.MCCLESKEY_IONS` (e.g. ``"Na+"``).
    charge : int
        Signed charge number (e.g. +1, -2).
    count : int
        Ions per formula unit of the salt.
    """

    name: str
    charge: int
    count: int = 1


@dataclass(frozen=True)
class PitzerParams:
    """Pitzer osmotic-coefficient parameters of a single salt (Pitzer & Mayorga 1973, 1974).

    phi = 1 - |z+ z-| A_phi sqrt(I) / (1 + 1.2 sqrt(I)) + m B_phi + m^2 C_phi with
    B_phi = b0 + b1 exp(-a1 sqrt(I)) + b2 exp(-a2 sqrt(I)); m in mol/kg water.

    Attributes
    ----------
    a1, b1, a2, b2 : float
        alpha1, beta1, alpha2, beta2 ((kg/mol)^0.5, kg/mol).
    b0, cphi : float
        beta0 (kg/mol) and C_phi ((kg/mol)^2).
    """

    a1: float
    b1: float
    a2: float
    b2: float
    b0: float
    cphi: float


@dataclass(frozen=True)
class IonPairing:
    """Ion-pair (neutral complex) formation of a symmetric salt, M + X = MX(aq).

    Attributes
    ----------
    log10_k_25C : float
        log10 of the association constant at 25 degC (kg/mol).
    enthalpy_J_per_mol : float
        Van 't Hoff reaction enthalpy (J/mol).
    """

    log10_k_25C: float
    enthalpy_J_per_mol: float


@dataclass(frozen=True)
class Limits:
    """Validity limits of a solute's models (salinity in the record's unit, degC, MPa sea pressure).

    Attributes
    ----------
    temperature_C : (float, float)
        Hard temperature range of the conductivity model (the freezing point applies too).
    pressure_MPa : (float, float)
        Hard pressure range (both models).
    salinity_max : float or None
        Fixed upper salinity of the conductivity model; None: limited by the saturation table.
    salinity_note : str
        Appended to the error for ``salinity_max`` (``{name}`` is replaced by the solute name).
    freezing_salinity_max : float or None
        Upper salinity of the freezing-point model; None: the eutectic
        (``Solute.eutectic_mass_fraction``).
    freezing_note : str
        Appended to the error for the freezing-point salinity limit (``{name}`` replaced).
    saturation_t_C, saturation_w : tuple of float or None
        Solubility table (temperature in degC, mass fraction of the saturated
        solution), piecewise linear; a leading None temperature is the ice-salt
        eutectic temperature computed by the freezing model.
    reference_salinity_max : float
        Points above are flagged SALTY.
    reference_temperature_C : (float, float)
        Points below / above are flagged COLD / WARM.
    reference_pressure_max_MPa : float
        Conductivity points above are flagged DEEP.
    freezing_reference_pressure_max_MPa : float
        Freezing points above are flagged DEEP.
    """

    temperature_C: tuple
    pressure_MPa: tuple = (0.0, _limits.P_MAX_MPA)
    salinity_max: float | None = None
    salinity_note: str = ""
    freezing_salinity_max: float | None = None
    freezing_note: str = ""
    saturation_t_C: tuple | None = None
    saturation_w: tuple | None = None
    reference_salinity_max: float = math.inf
    reference_temperature_C: tuple = (-math.inf, math.inf)
    reference_pressure_max_MPa: float = 100.0
    freezing_reference_pressure_max_MPa: float = 100.0


@dataclass(frozen=True)
class Solute:
    """Registry record of one solute: identity, composition, models, limits and sources.

    The model callables receive the record itself as first argument and
    already-checked, broadcast arrays (salinity in ``salinity.unit``,
    temperature degC, sea pressure MPa):

    * ``conductivity_model(solute, salinity, temperature_C, pressure_MPa)`` -> S/m
    * ``extrapolation_flags(solute, salinity, temperature_C, pressure_MPa)`` ->
      int :class:`~induct.brine.flags.ExtrapolationFlag` bits
    * ``freezing_model(solute, salinity, pressure_MPa, above_liquidus=None)`` ->
      degC; with ``above_liquidus`` given, points beyond the upper end of the
      ice liquidus (where the first solid is the salt) get that value.
    * ``freezing_depression(solute, mass_fraction)`` -> K at 1 atm (optional,
      used by :func:`induct.brine.freezing.brine_freezing_point`).

    A callable may list the record fields it needs in a ``requires`` attribute;
    :meth:`problems` checks them.

    Attributes
    ----------
    name : str
        Canonical name (as returned to callers and printed).
    aliases : tuple of str
        Other accepted names (lookups are case-insensitive).
    description : str
        One line on the models used.
    salinity : SalinityScale
        Unit of the ``salinity_g_per_kg`` argument for this solute.
    conductivity_model, extrapolation_flags, freezing_model : callable
        See above.
    limits : Limits
    reference_point : (float, float, float)
        (salinity, degC, MPa) inside the reference range, where the conductivity model is checked.
    sources : tuple of str
        Publications of the models and data.
    molar_mass_kg_per_mol : float or None
        Molar mass of the anhydrous salt (kg/mol); None for mixtures (seawater).
    ions : tuple of Ion
        Ions of one formula unit (empty for seawater: not modelled ion by ion).
    apparent_molar_volume : (float, float) or None
        Masson's rule V_phi = V0 + S_v sqrt(m): V0 (cm^3/mol), S_v (cm^3 kg^0.5 mol^-1.5).
    concentrated_factor : (float, float) or None
        (g, h) of G(m) = exp(-g m^2 / (1 + h m)).
    conductivity_calibration : tuple of (float, float) or None
        (mass %, mS/cm) points at 20 degC that ``concentrated_factor`` was fitted to.
    ion_pairing : IonPairing or None
    freezing_depression : callable or None
    pitzer : PitzerParams or None
    eutectic_mass_fraction : float or None
        Upper end of the ice liquidus (kg salt / kg solution).

    Examples
    --------
    >>> from induct.brine.registry import get_solute
    >>> kcl = get_solute("KCl")
    >>> kcl.nu, kcl.charge_product, kcl.ionic_strength_per_molality
    (2, 1, 1.0)
    >>> kcl.freezing_salinity_max       # g/kg, the ice-KCl eutectic
    198.7
    >>> kcl.problems()
    []
    """

    name: str
    aliases: tuple
    description: str
    salinity: SalinityScale
    conductivity_model: Callable
    extrapolation_flags: Callable
    freezing_model: Callable
    limits: Limits
    reference_point: tuple
    sources: tuple
    molar_mass_kg_per_mol: float | None = None
    ions: tuple = ()
    apparent_molar_volume: tuple | None = None
    concentrated_factor: tuple | None = None
    conductivity_calibration: tuple | None = None
    ion_pairing: IonPairing | None = None
    freezing_depression: Callable | None = None
    pitzer: PitzerParams | None = None
    eutectic_mass_fraction: float | None = None

    def __post_init__(self):
        # tuples, so that records are hashable (used as cache keys)
        for name in ("aliases", "ions", "sources", "reference_point"):
            object.__setattr__(self, name, tuple(getattr(self, name)))

    @property
    def lookup_names(self) -> tuple:
        """Lower-case name and aliases under which :func:`get_solute` finds this record."""
        return tuple(n.lower() for n in (self.name, *self.aliases))

    @property
    def nu(self) -> int:
        """Ions per formula unit (sum of the ion counts)."""
        return sum(ion.count for ion in self.ions)

    @property
    def charge_product(self) -> int:
        """|z+ z-| of a salt with one cation and one anion (0 without ions)."""
        if not self.ions:
            return 0
        return abs(self.ions[0].charge * self.ions[-1].charge)

    @property
    def ionic_strength_per_molality(self) -> float:
        """I / m = (1/2) sum_i nu_i z_i^2 for the fully dissociated salt."""
        return 0.5 * sum(ion.count * ion.charge ** 2 for ion in self.ions)

    @property
    def freezing_salinity_max(self) -> float:
        """Upper salinity (record unit) of the freezing-point model: fixed limit or the eutectic."""
        if self.limits.freezing_salinity_max is not None:
            return self.limits.freezing_salinity_max
        if self.eutectic_mass_fraction is None:
            return math.nan
        return self.salinity.from_mass_fraction * self.eutectic_mass_fraction

    def problems(self) -> list:
        """Inconsistencies of the record (empty list if none); :func:`register_solute` refuses others.

        Returns
        -------
        list of str
            One message per problem.
        """
        out = []
        if not isinstance(self.name, str) or not self.name.strip():
            out.append("name must be a non-empty string")
        if not all(isinstance(a, str) and a.strip() for a in self.aliases):
            out.append("aliases must be non-empty strings")
        elif len(set(self.lookup_names)) != len(self.lookup_names):
            out.append("name and aliases must differ (case-insensitively)")
        for f in ("conductivity_model", "extrapolation_flags", "freezing_model"):
            if not callable(getattr(self, f)):
                out.append(f"{f} must be callable")
        for f in fields(self):
            func = getattr(self, f.name)
            for need in getattr(func, "requires", ()) if callable(func) else ():
                if getattr(self, need) in (None, ()):
                    out.append(f"{f.name} needs {need}")
        lim = self.limits
        for what, (lo, hi) in (("temperature_C", lim.temperature_C), ("pressure_MPa", lim.pressure_MPa),
                               ("reference_temperature_C", lim.reference_temperature_C)):
            if not lo < hi:
                out.append(f"limits.{what} must be increasing, got ({lo}, {hi})")
        if lim.salinity_max is None and lim.saturation_w is None:
            out.append("limits need salinity_max or a saturation table")
        if not self.freezing_salinity_max > 0.0:
            out.append("freezing salinity limit (limits.freezing_salinity_max or eutectic_mass_fraction) missing")
        if (lim.saturation_t_C is None) != (lim.saturation_w is None):
            out.append("saturation_t_C and saturation_w go together")
        elif lim.saturation_t_C is not None:
            t, w = lim.saturation_t_C, lim.saturation_w
            if len(t) != len(w) or len(t) < 2:
                out.append("saturation table: same length >= 2 needed")
            elif any(b <= a for a, b in zip(t[1:], t[2:])) or (t[0] is not None and t[1] <= t[0]):
                out.append("saturation table temperatures must increase")
            elif not all(0.0 < x < 1.0 for x in w):
                out.append("saturation mass fractions must lie in (0, 1)")
            elif t[0] is None and w[0] != self.eutectic_mass_fraction:
                out.append("a leading None saturation temperature needs saturation_w[0] == eutectic_mass_fraction")
        if self.ions and sum(ion.count * ion.charge for ion in self.ions) != 0:
            out.append("ions must be electrically neutral")
        if self.ion_pairing is not None and (len(self.ions) != 2 or self.ions[0].charge != -self.ions[1].charge):
            out.append("ion_pairing is modelled for symmetric salts (one cation, one anion, |z+| = |z-|) only")
        return out


# ----------------------------------------------------------------------------
# The registry
# ----------------------------------------------------------------------------
def register_solute(solute: Solute) -> Solute:
    """Add a record to :data:`SOLUTES` after checking it.

    Parameters
    ----------
    solute : Solute

    Returns
    -------
    Solute
        The record.

    Raises
    ------
    ValueError
        Inconsistent record (:meth:`Solute.problems`) or a name/alias already registered.

    Examples
    --------
    >>> import dataclasses
    >>> from induct import brine
    >>> from induct.brine.registry import get_solute, register_solute, unregister_solute
    >>> rec = register_solute(dataclasses.replace(get_solute("KCl"), name="KCl-copy", aliases=()))
    >>> float(brine.conductivity("kcl-copy", 10.0, 20.0)) == float(brine.conductivity("KCl", 10.0, 20.0))
    True
    >>> unregister_solute("KCl-copy").name
    'KCl-copy'
    """
    SOLUTES._add(solute)
    return solute


def unregister_solute(name) -> Solute:
    """Remove a record from :data:`SOLUTES` (by name or alias) and return it.

    Parameters
    ----------
    name : str

    Returns
    -------
    Solute

    Raises
    ------
    ValueError
        Unknown name.

    Examples
    --------
    See :func:`register_solute`.
    """
    get_solute(name)  # ValueError naming the registered solutes
    return SOLUTES._remove(name)


# ----------------------------------------------------------------------------
# Built-in solutes. Add new ones here (see the module docstring).
# ----------------------------------------------------------------------------
_EUTECTIC_NOTE = (" for the ice liquidus of {name} (above the eutectic the first solid to form is the salt, "
                  "see the saturation limit)")

#: What the single-salt brines share: the g/kg scale and the ion-additive conductivity and Pitzer freezing models.
_SINGLE_SALT_MODELS = dict(
    salinity=G_PER_KG,
    conductivity_model=solutions.brine_conductivity,
    extrapolation_flags=extrapolation.reference_range_flags,
    freezing_model=freezing.brine_freezing_point,
)


def _single_salt_limits(**saturation) -> Limits:
    """Limits of a single-salt brine: the shared temperature ranges plus its own saturation table."""
    return Limits(
        temperature_C=(_limits.T_MIN_WALDEN_C, _limits.T_MAX_SOLUTIONS_C),
        freezing_note=_EUTECTIC_NOTE,
        reference_temperature_C=(0.0, _limits.T_MAX_SOLUTIONS_C),
        **saturation,
    )


_BUILTIN = (
    Solute(
        name="seawater",
        aliases=("sea water",),
        description="PSS-78 (Hill et al. 1986 below SP 2), Walden/NaCl-ratio extrapolation beyond; "
                    "TEOS-10 freezing polynomial",
        salinity=PRACTICAL_SALINITY,
        conductivity_model=extrapolation.seawater_conductivity_model,
        extrapolation_flags=extrapolation.reference_range_flags,
        freezing_model=freezing.seawater_freezing_point,
        limits=Limits(
            temperature_C=extrapolation.T_LIMITS_C,
            pressure_MPa=(0.0, _limits.P_MAX_MPA),
            salinity_max=extrapolation.SP_LIMIT,
            salinity_note=" for {name} (PSS-78 to 42, extrapolated beyond)",
            freezing_salinity_max=extrapolation.SP_LIMIT,
            reference_salinity_max=seawater.SP_MAX,
            reference_temperature_C=(seawater.T_MIN_C, seawater.T_MAX_C),
            reference_pressure_max_MPa=seawater.P_MAX_MPA,
        ),
        reference_point=(35.0, 15.0, 0.0),
        sources=(
            "PSS-78: UNESCO (1981), Tech. Pap. Mar. Sci. 36; Lewis & Perkin (1981), Deep-Sea Res. 28A, 307; "
            "Fofonoff & Millard (1983), UNESCO Tech. Pap. Mar. Sci. 44",
            "SP < 2: Hill, Dauphinee & Woods (1986), IEEE J. Ocean. Eng. OE-11, 109, with the TEOS-10 Hill ratio",
            "C(35, 15 degC IPTS-68, 0) = 4.2914 S/m: Culkin & Smith (1980), IEEE J. Ocean. Eng. OE-5, 22",
            "Freezing: TEOS-10 polynomial, McDougall, Barker, Feistel & Galton (2014), J. Phys. Oceanogr. 44, 1751",
            "Beyond 100 MPa: IAPWS R14-08(2011) melting curves; Wagner et al. (2011), J. Phys. Chem. Ref. Data 40, "
            "043103",
            "Extrapolation: Walden scaling with IAPWS-95 density and IAPWS 2008 viscosity of pure water",
            "SA = 35.16504/35 SP: Millero et al. (2008), Deep-Sea Res. I 55, 50",
        ),
    ),
    Solute(
        name="NaCl",
        aliases=("sodium chloride",),
        description="McCleskey et al. (2012) ion-additive conductivity with a concentrated-solution factor; "
                    "Bodnar (1993) freezing point",
        **_SINGLE_SALT_MODELS,
        limits=_single_salt_limits(
            saturation_t_C=(None, -17.78, -12.22, -6.67, -1.1, 0.0, 0.1, 10.0, 21.11, 37.78, 51.67, 65.56),
            saturation_w=(0.232, 0.2383, 0.2470, 0.2553, 0.2616, 0.2629, 0.2631, 0.2636, 0.2645, 0.2668,
                          0.2692, 0.2721),
        ),
        reference_point=(10.0, 20.0, 0.0),
        sources=(
            "Conductivity: McCleskey, Nordstrom, Ryan & Ball (2012), Geochim. Cosmochim. Acta 77, 369",
            "Concentrated-solution factor fitted to the CRC Handbook 20 degC conductivity table and the "
            "saturated-NaCl standard (226.0 mS/cm at 20 degC)",
            "Freezing: Bodnar (1993), Geochim. Cosmochim. Acta 57, 683 (eutectic 23.2 mass %, -21.2 degC)",
            "Solubility: Salt Institute table, consistent with the CRC Handbook solubility table",
            "Masson V0, S_v near 25 degC (from memory)",
        ),
        molar_mass_kg_per_mol=0.0584428,
        ions=(Ion("Na+", +1), Ion("Cl-", -1)),
        apparent_molar_volume=(16.6, 1.9),
        concentrated_factor=(0.012017, 0.0),
        conductivity_calibration=((0.5, 8.2), (1.0, 16.0), (2.0, 30.2), (26.4, 226.0)),
        freezing_depression=freezing.bodnar_depression,
        eutectic_mass_fraction=0.232,
    ),
    Solute(
        name="MgSO4",
        aliases=("magnesium sulfate", "magnesium sulphate"),
        description="McCleskey et al. (2012) ion-additive conductivity with MgSO4(aq) ion pairing and a "
                    "concentrated-solution factor; Pitzer ice-equilibrium freezing point",
        **_SINGLE_SALT_MODELS,
        limits=_single_salt_limits(
            saturation_t_C=(None, 0.0, 10.0, 20.0, 25.0, 30.0, 40.0, 50.0, 60.0),
            saturation_w=(0.173, 0.182, 0.217, 0.251, 0.263, 0.282, 0.309, 0.334, 0.353),
        ),
        reference_point=(50.0, 20.0, 0.0),
        sources=(
            "Conductivity: McCleskey, Nordstrom, Ryan & Ball (2012), Geochim. Cosmochim. Acta 77, 369",
            "Ion pairing: log10 K = 2.37 at 25 degC, dH = 19.04 kJ/mol, PHREEQC database phreeqc.dat "
            "(Parkhurst & Appelo 2013; from memory)",
            "Concentrated-solution factor fitted to the CRC Handbook 20 degC conductivity table",
            "Freezing: Pitzer & Mayorga (1974), J. Solution Chem. 3, 539, beta0 and C_phi refitted to the "
            "Smithsonian Physical Tables (Forsythe 1956) via the CRC Handbook; eutectic 17.3 mass % (from memory)",
            "Solubility 0-60 degC: CRC Handbook (from memory)",
            "Masson V0, S_v near 25 degC (from memory)",
        ),
        molar_mass_kg_per_mol=0.1203676,
        ions=(Ion("Mg2+", +2), Ion("SO4 2-", -2)),
        apparent_molar_volume=(-7.2, 12.5),
        concentrated_factor=(0.714311, 1.332731),
        conductivity_calibration=((0.5, 4.1), (1.0, 7.6), (2.0, 13.3), (5.0, 27.4), (10.0, 42.7),
                                  (15.0, 54.2), (20.0, 51.1), (25.0, 44.1)),
        ion_pairing=IonPairing(log10_k_25C=2.37, enthalpy_J_per_mol=19037.0),
        freezing_depression=freezing.pitzer_depression,
        pitzer=PitzerParams(a1=1.4, b1=3.343, a2=12.0, b2=-37.23, b0=0.198924, cphi=0.038351),
        eutectic_mass_fraction=0.173,
    ),
    Solute(
        name="KCl",
        aliases=("potassium chloride",),
        description="McCleskey et al. (2012) ion-additive conductivity with a concentrated-solution factor; "
                    "Pitzer ice-equilibrium freezing point",
        **_SINGLE_SALT_MODELS,
        limits=_single_salt_limits(
            saturation_t_C=(None, 0.0, 10.0, 20.0, 25.0, 30.0, 40.0, 50.0, 60.0),
            saturation_w=(0.1987, 0.2174, 0.2361, 0.2539, 0.2622, 0.2704, 0.2859, 0.3004, 0.3140),
        ),
        reference_point=(10.0, 20.0, 0.0),
        sources=(
            "Conductivity: McCleskey, Nordstrom, Ryan & Ball (2012), Geochim. Cosmochim. Acta 77, 369",
            "Concentrated-solution factor fitted to the CRC Handbook 20 degC conductivity table and the NIST "
            "1.0 mol/kg standard (99.170 mS/cm at 20 degC; Wu et al. 1994, J. Res. NIST 99, 241)",
            "Freezing: Pitzer & Mayorga (1973), J. Phys. Chem. 77, 268, beta0 and C_phi refitted to the "
            "Smithsonian Physical Tables (Forsythe 1956) via the CRC Handbook; eutectic 19.87 mass %, "
            "-10.8 degC (Brady 2009 phase diagram)",
            "Solubility 0-60 degC: CRC Handbook (from memory)",
            "Masson V0, S_v near 25 degC (from memory)",
        ),
        molar_mass_kg_per_mol=0.0745513,
        ions=(Ion("K+", +1), Ion("Cl-", -1)),
        apparent_molar_volume=(26.8, 2.0),
        concentrated_factor=(1.5e-05, 4.471304),
        conductivity_calibration=((0.5, 8.2), (1.0, 15.7), (2.0, 29.5), (5.0, 71.9),
                                  (100 * 74.5513e-3 / 1.0745513, 99.170)),
        freezing_depression=freezing.pitzer_depression,
        pitzer=PitzerParams(a1=2.0, b1=0.2122, a2=0.0, b2=0.0, b0=0.026839, cphi=-0.00123),
        eutectic_mass_fraction=0.1987,
    ),
)

for _solute in _BUILTIN:
    register_solute(_solute)
del _solute
