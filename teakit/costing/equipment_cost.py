"""Equipment purchased and bare-module costs by Turton's correlations.

Source of every model here: Turton, Bailie, Whiting, Shaeiwitz & Bhattacharyya, *Analysis,
Synthesis, and Design of Chemical Processes*, 4th ed. (2012), Appendix A. Coefficients are in
``data/turton_*.csv``; their ``source`` column says which were read and which were recalled from
memory and still need confirming against the book.

Purchased cost at base conditions (carbon steel, ambient pressure), Eq. (A.1), Table A.1, in US
dollars at CEPCI 397 (May-Sept 2001):

.. math:: \\log_{10} C_p^0 = K_1 + K_2 \\log_{10} A + K_3 (\\log_{10} A)^2

Pressure factor, Eq. (A.2), Table A.2 (P in barg; for fans the pressure rise in kPa):

.. math:: \\log_{10} F_P = C_1 + C_2 \\log_{10} P + C_3 (\\log_{10} P)^2

and for process vessels and towers the thickness-based factor of the Table A.2 note (P in barg,
D in m; S E = 850 bar, corrosion allowance 0.00315 m, minimum thickness 0.0063 m):

.. math:: F_{P,\\mathrm{vessel}} = \\max\\left(1,\\;
   \\frac{\\frac{(P+1) D}{2 [850 - 0.6 (P+1)]} + 0.00315}{0.0063}\\right),
   \\qquad F_{P,\\mathrm{vessel}} = 1.25 \\text{ for } P < -0.5 \\text{ barg}

The thickness inside this factor is a costing device with fixed S E, not a wall thickness for
any real vessel (see :mod:`teakit.equipment.vessel` for a preliminary sizing; the applicable
pressure-vessel code, local regulations and a licensed engineer govern design).

Bare-module cost, Eq. (A.4) with Table A.4 (vessels, towers, heat exchangers, pumps) or with the
bare-module factors of Table A.6 / Figure A.19 (compressors, drives, fans, fired heaters, packing):

.. math:: C_{BM} = C_p^0 (B_1 + B_2 F_M F_P) \\qquad\\text{or}\\qquad C_{BM} = C_p^0 F_{BM} F_P

Capacities are SI (W for power and duty, m^3, m^2, m^3/s); the table converts them to Turton's
units. Out-of-range capacities and pressures follow the policy of :mod:`teakit.costing._range`:
within a factor 10 of the stated range a :class:`~teakit.errors.RangeWarning`, further out an
:class:`~teakit.errors.OutOfRangeError`.

Parallel units: a capacity above a correlation's maximum is, by default, met with ``n`` equal
units in parallel, ``n = ceil(A / A_max)``, each costed at ``A / n`` (a common textbook practice
when a single unit would exceed the size that is built or that the correlation covers). Pass
``parallel=False`` to extrapolate a single unit instead (RangeWarning). ``parallel_units`` and
``details=True`` report ``n``.
"""

from __future__ import annotations

import functools
import math

import numpy as np
import pandas as pd

from teakit.costing._range import RANGE_FACTOR, apply_range_policy
from teakit.costing.escalation import TURTON_CEPCI_BASIS, _as_index
from teakit.data import load_table
from teakit.errors import InputError
from teakit.validation import (
    broadcast_arrays,
    check_positive,
    check_range,
    finite_result,
    scalar_or_array,
)

__all__ = [
    "VESSEL_CORROSION_ALLOWANCE",
    "VESSEL_MIN_THICKNESS",
    "VESSEL_SE_BAR",
    "bare_module_constants",
    "bare_module_cost",
    "bare_module_factor",
    "base_bare_module_cost",
    "equipment_kinds",
    "material_factor",
    "materials",
    "parallel_units",
    "pressure_factor",
    "purchased_cost",
    "vessel_cost_from_mass",
    "vessel_diameter",
]

_SOURCE = "Turton 4th ed. Table A.1"
_SOURCE_P = "Turton 4th ed. Table A.2"

#: Allowable stress times weld efficiency in Turton's vessel thickness formula [bar].
VESSEL_SE_BAR = 850.0
#: Corrosion allowance in Turton's vessel thickness formula [m].
VESSEL_CORROSION_ALLOWANCE = 0.00315
#: Minimum wall thickness below which F_P = 1 in Turton's vessel formula [m].
VESSEL_MIN_THICKNESS = 0.0063
_VESSEL_VACUUM_BARG = -0.5
_VESSEL_VACUUM_FP = 1.25
_FULL_VACUUM_BARG = -1.0



@functools.cache
def _tables():
    pc = load_table("turton_purchased_cost").set_index("kind")
    pf = load_table("turton_pressure_factor")
    fm = load_table("turton_material_factor")
    bb = load_table("turton_bare_module_b").set_index("bare_module_class")
    fbm = load_table("turton_bare_module_factor")
    return pc, pf, fm, bb, fbm


def _row(kind: str) -> dict:
    pc = _tables()[0]
    if not isinstance(kind, str) or kind not in pc.index:
        raise InputError(
            f"kind = {kind!r} is not an equipment kind of data/turton_purchased_cost.csv; "
            f"valid kinds: {', '.join(pc.index)}"
        )
    return _row_cached(kind)


# Table lookups are memoised (a study prices thousands of batches with the same kinds): the
# cached objects are never mutated by their callers.
@functools.cache
def _row_cached(kind: str) -> dict:
    # A plain dict: a study reads these fields thousands of times (a Series look-up costs
    # about a hundred times more).
    return _tables()[0].loc[kind].to_dict()


def _material_rows(kind: str) -> tuple[pd.DataFrame, str, str]:
    _row(kind)
    return _material_rows_cached(kind)


@functools.cache
def _material_rows_cached(kind: str) -> tuple[pd.DataFrame, str, str]:
    """Rows of F_M (B1B2 kinds) or F_BM (FBM kinds) for ``kind``, the value column and table."""
    row = _row(kind)
    _, _, fm, _, fbm = _tables()
    if row["bare_module_method"] == "B1B2":
        t, col, name = fm, "F_M", "turton_material_factor"
    else:
        t, col, name = fbm, "F_BM", "turton_bare_module_factor"
    return t[t["material_class"] == row["material_class"]], col, name


def _lookup_material(kind: str, material: str) -> float:
    if isinstance(material, str):
        value = _material_factors(kind).get(material.strip().lower())
        if value is not None:
            return value
    rows, _, name = _material_rows(kind)
    raise InputError(
        f"material = {material!r} is not listed for kind {kind!r} in data/{name}.csv; "
        f"valid materials: {', '.join(rows['material'])}"
    )


@functools.cache
def _material_factors(kind: str) -> dict[str, float]:
    rows, col, _ = _material_rows(kind)
    out: dict[str, float] = {}
    for m, v in zip(rows["material"], rows[col], strict=True):
        out.setdefault(m.lower(), float(v))  # first listing wins
    return out


def equipment_kinds() -> pd.DataFrame:
    """The equipment kinds that can be costed, with their capacity variable and range.

    Returns
    -------
    pandas.DataFrame
        One row per kind: ``description``, ``capacity_quantity``, ``capacity_unit`` (Turton's),
        ``capacity_min_SI``, ``capacity_max_SI`` (W, m^3, m^2 or m^3/s), ``bare_module_method``
        and ``source`` [-].
    """
    pc = _tables()[0]
    f = pc["capacity_si_factor"]
    si = pc["capacity_unit"].map({"kW": "W"}).fillna(pc["capacity_unit"])
    return pd.DataFrame(
        {
            "description": pc["description"],
            "capacity_quantity": pc["capacity_quantity"],
            "capacity_unit": pc["capacity_unit"],
            "capacity_unit_SI": si,
            "capacity_min_SI": pc["capacity_min"] * f,
            "capacity_max_SI": pc["capacity_max"] * f,
            "bare_module_method": pc["bare_module_method"],
            "source": pc["source"],
        }
    )


def materials(kind: str) -> list[str]:
    """Materials of construction tabulated for ``kind``.

    Parameters
    ----------
    kind : str
        Equipment kind, one of :func:`equipment_kinds` [-].

    Returns
    -------
    list of str
        Material names accepted by :func:`material_factor` or :func:`bare_module_factor` [-].
    """
    return list(_material_rows(kind)[0]["material"])


def _capacity(kind: str, capacity) -> tuple[dict, np.ndarray]:
    row = _row(kind)
    a = check_positive("capacity", capacity) / float(row["capacity_si_factor"])
    return row, a


def _n_units(row: dict, a: np.ndarray) -> np.ndarray:
    amax = float(row["capacity_max"])
    return np.where(a > amax, np.ceil(a / amax * (1 - 1e-12)), 1.0)


def parallel_units(kind: str, capacity):
    """Number of equal parallel units used for ``capacity`` (1 up to the correlation maximum).

    .. math:: n = \\lceil A / A_\\max \\rceil \\quad (n = 1 \\text{ for } A \\le A_\\max)

    A common textbook practice; capacities above ``RANGE_FACTOR`` (10) times the maximum are
    refused by :func:`purchased_cost`.

    Parameters
    ----------
    kind : str
        Equipment kind, one of :func:`equipment_kinds` [-].
    capacity : float or array_like
        Total capacity in SI (W, m^3, m^2 or m^3/s, see :func:`equipment_kinds`) [SI].

    Returns
    -------
    int or numpy.ndarray of int
        Number of units [-].
    """
    row, a = _capacity(kind, capacity)
    n = _n_units(row, a).astype(int)
    return int(n) if n.ndim == 0 else n


def purchased_cost(kind: str, capacity, parallel: bool = True):
    """Purchased cost at base conditions (carbon steel, ambient pressure), Turton Eq. (A.1).

    .. math:: C_p^0 = n \\, 10^{K_1 + K_2 x + K_3 x^2}, \\qquad x = \\log_{10}(A / n)

    Turton 4th ed. (2012), Appendix A, Eq. (A.1) and Table A.1; ``n`` parallel units (see the
    module docstring), ``n = 1`` inside the range.

    Parameters
    ----------
    kind : str
        Equipment kind, one of :func:`equipment_kinds` [-].
    capacity : float or array_like
        Total capacity in SI: power or duty in W, volume in m^3, area in m^2, gas flow in m^3/s
        (see :func:`equipment_kinds`) [SI].
    parallel : bool, optional
        Split a capacity above the correlation maximum into equal parallel units (default); if
        False, extrapolate one unit with a RangeWarning [-].

    Returns
    -------
    float or numpy.ndarray
        Purchased cost of all units [USD at CEPCI 397 (2001)].

    Raises
    ------
    InputError
        Unknown kind, or a capacity that is not finite and positive.
    OutOfRangeError
        Capacity below a tenth of the minimum or above 10 times the maximum.
    """
    row, a = _capacity(kind, capacity)
    lo, hi, unit = float(row["capacity_min"]), float(row["capacity_max"]), row["capacity_unit"]
    given = "" if float(row["capacity_si_factor"]) == 1.0 else ", passed in W, shown in kW"
    apply_range_policy(
        f"capacity of {kind} ({row['capacity_quantity']}{given})",
        a,
        lo,
        hi,
        unit,
        _SOURCE,
        silent_high=parallel,
    )
    n = _n_units(row, a) if parallel else np.ones_like(a)
    x = np.log10(a / n)
    logc = row["K1"] + row["K2"] * x + row["K3"] * x * x
    return scalar_or_array(n * 10.0**logc)


def _pressure_rows(kind: str, pressure_on: str) -> tuple[str, pd.DataFrame]:
    _row(kind)
    if not isinstance(pressure_on, str):
        raise InputError(f"pressure_on must be 'both' or 'tube', got {pressure_on!r}")
    return _pressure_rows_cached(kind, pressure_on)


@functools.cache
def _pressure_rows_cached(kind: str, pressure_on: str) -> tuple[str, pd.DataFrame]:
    row = _row(kind)
    pf = _tables()[1]
    pclass = row["pressure_class"]
    if pressure_on not in ("both", "tube"):
        raise InputError(f"pressure_on must be 'both' or 'tube', got {pressure_on!r}")
    if pressure_on == "tube":
        if pclass != "hx_shell_tube":
            raise InputError(
                f"pressure_on='tube' applies to shell-and-tube exchangers only, not {kind!r}"
            )
        pclass = "hx_shell_tube_tube_only"
    rows = pf[pf["pressure_class"] == pclass].sort_values("P_low")
    return pclass, rows


def _pressure_table(kind: str, pressure_on: str) -> dict:
    """The pressure-factor rows of ``kind`` as plain numbers and arrays (InputError for a bad
    kind or ``pressure_on``)."""
    _pressure_rows(kind, pressure_on)
    return _pressure_table_cached(kind, pressure_on)


@functools.cache
def _pressure_table_cached(kind: str, pressure_on: str) -> dict:
    _, rows = _pressure_rows(kind, pressure_on)
    hard = rows["P_hard_barg"].dropna()
    return {"method": rows["method"].iloc[0], "hard": float(hard.iloc[0]) if hard.size else None,
            "top": float(rows["P_high"].max()), "kpa": rows["P_variable"].iloc[0] == "kPa",
            "lows": rows["P_low"].to_numpy(dtype=float),
            "C": tuple(np.nan_to_num(rows[c].to_numpy(dtype=float)) for c in ("C1", "C2", "C3"))}


def _vessel_fp(p: np.ndarray, d: np.ndarray) -> np.ndarray:
    pa = p + 1.0
    t = pa * d / (2.0 * (VESSEL_SE_BAR - 0.6 * pa)) + VESSEL_CORROSION_ALLOWANCE
    fp = np.maximum(t / VESSEL_MIN_THICKNESS, 1.0)
    return np.where(p < _VESSEL_VACUUM_BARG, _VESSEL_VACUUM_FP, fp)


def pressure_factor(kind: str, P_barg, D=None, pressure_on: str = "both"):
    """Pressure factor F_P of Turton Table A.2 (polynomial, or the vessel thickness formula).

    .. math:: \\log_{10} F_P = C_1 + C_2 \\log_{10} P + C_3 (\\log_{10} P)^2

    and for vessels and towers

    .. math:: F_P = \\max\\left(1, \\frac{(P+1) D / (2 [850 - 0.6 (P+1)]) + 0.00315}{0.0063}
       \\right), \\quad F_P = 1.25 \\text{ for } P < -0.5

    Turton 4th ed. (2012), Appendix A, Eq. (A.2), Table A.2 and its vessel note. Kinds with no
    pressure factor in Table A.2 (compressors, drives, packing) give 1. A pressure above the
    table's range warns, and beyond 10 times its top (for vessels beyond 1000 barg, where the
    thin-wall formula is meaningless) raises (policy of :mod:`teakit.costing._range`).

    Parameters
    ----------
    kind : str
        Equipment kind, one of :func:`equipment_kinds` [-].
    P_barg : float or array_like
        Design pressure as gauge pressure, >= -1 barg (full vacuum); for fans, the pressure rise
        across the fan [barg].
    D : float or array_like, optional
        Vessel inside diameter, required for vessels and towers [m].
    pressure_on : {"both", "tube"}, optional
        For shell-and-tube exchangers: both shell and tubes at pressure (default) or the tubes
        only [-].

    Returns
    -------
    float or numpy.ndarray
        Pressure factor, broadcast over ``P_barg`` and ``D`` [-].

    Raises
    ------
    InputError
        Unknown kind, pressure below full vacuum, missing or non-positive ``D`` for a vessel.
    OutOfRangeError
        Pressure far above the table's range.
    """
    t = _pressure_table(kind, pressure_on)
    p = check_range("P_barg", P_barg, _FULL_VACUUM_BARG, np.inf, unit="barg")
    method = t["method"]
    if method == "none":
        return scalar_or_array(np.ones_like(p))
    hard = t["hard"]
    if method == "vessel":
        if D is None:
            raise InputError(
                f"D (vessel inside diameter, m) is required for the pressure factor of {kind!r}; "
                "vessel_diameter(volume, L_over_D) estimates it"
            )
        d = check_positive("D", D, unit="m")
        top = t["top"]
        apply_range_policy(
            f"P_barg (pressure of {kind})",
            p,
            _FULL_VACUUM_BARG,
            top,
            "barg",
            f"{_SOURCE_P} (vessel thickness formula)",
            hard_high=hard if hard is not None else top * RANGE_FACTOR,
        )
        with np.errstate(over="ignore", invalid="ignore"):
            fp = _vessel_fp(p, d)
        return scalar_or_array(finite_result("pressure factor", fp, P_barg=p, D=d))
    kpa = t["kpa"]
    pv = p * 100.0 if kpa else p
    unit = "kPa" if kpa else "barg"
    top = t["top"]
    hard_high = hard * (100.0 if kpa else 1.0) if hard is not None else top * RANGE_FACTOR
    lows = t["lows"]
    apply_range_policy(
        f"P_barg (pressure {'rise ' if kpa else ''}of {kind}{', in kPa' if kpa else ''})",
        pv,
        float(lows.min()),
        top,
        unit,
        _SOURCE_P,
        hard_high=hard_high,
    )
    # Segment of each pressure: the last row whose P_low <= P (above the top: the top row).
    seg = np.clip(np.searchsorted(lows, pv, side="right") - 1, 0, lows.size - 1)
    c1, c2, c3 = (c[seg] for c in t["C"])
    y = np.log10(np.where(pv > 0, pv, 1.0))
    logf = np.where((c1 == 0) & (c2 == 0) & (c3 == 0), 0.0, c1 + c2 * y + c3 * y * y)
    return scalar_or_array(10.0**logf)


def material_factor(kind: str, material: str) -> float:
    """Material factor F_M of Turton Table A.3 / Figure A.18 (kinds costed with B1, B2).

    Parameters
    ----------
    kind : str
        Equipment kind with ``bare_module_method`` B1B2 (vessels, towers, exchangers, pumps) [-].
    material : str
        Material of construction, one of :func:`materials` (case-insensitive); exchangers
        are written shell/tube, e.g. ``"CS/SS"`` [-].

    Returns
    -------
    float
        F_M [-].

    Raises
    ------
    InputError
        Unknown kind or material (the message lists the valid ones), or a kind whose material
        enters through F_BM instead (use :func:`bare_module_factor`).
    """
    row = _row(kind)
    if row["bare_module_method"] != "B1B2":
        raise InputError(
            f"kind {kind!r} has no separate material factor in Turton Appendix A: its material "
            f"enters the bare-module factor F_BM; use bare_module_factor({kind!r}, material) "
            f"with material one of: {', '.join(materials(kind))}"
        )
    return _lookup_material(kind, material)


def bare_module_factor(kind: str, material: str = "CS") -> float:
    """Bare-module factor F_BM of Turton Table A.6 / Figure A.19 (kinds costed without B1, B2).

    Parameters
    ----------
    kind : str
        Equipment kind with ``bare_module_method`` FBM (compressors, drives, fans, fired heaters,
        packing) [-].
    material : str, optional
        Material of construction, one of :func:`materials` (case-insensitive) [-].

    Returns
    -------
    float
        F_BM (material included) [-].

    Raises
    ------
    InputError
        Unknown kind or material (the message lists the valid ones), or a kind costed with B1,
        B2 (use :func:`material_factor` and :func:`bare_module_constants`).
    """
    row = _row(kind)
    if row["bare_module_method"] != "FBM":
        raise InputError(
            f"kind {kind!r} is costed as C_p (B1 + B2 F_M F_P), not with one F_BM; use "
            f"material_factor({kind!r}, material) and bare_module_constants({kind!r})"
        )
    return _lookup_material(kind, material)


def bare_module_constants(kind: str) -> tuple[float, float]:
    """Bare-module constants (B1, B2) of Turton Table A.4.

    Parameters
    ----------
    kind : str
        Equipment kind with ``bare_module_method`` B1B2 [-].

    Returns
    -------
    tuple of float
        (B1, B2) [-].

    Raises
    ------
    InputError
        Unknown kind, or a kind costed with one F_BM.
    """
    row = _row(kind)
    if row["bare_module_method"] != "B1B2":
        raise InputError(
            f"kind {kind!r} has no B1, B2 in Turton Table A.4; it is costed with "
            f"bare_module_factor({kind!r}, material)"
        )
    bb = _tables()[3].loc[row["bare_module_class"]]
    return float(bb["B1"]), float(bb["B2"])


def _target_ratio(cepci_target) -> np.ndarray | float:
    if cepci_target is None:
        return 1.0
    return _as_index("cepci_target", cepci_target) / TURTON_CEPCI_BASIS


def bare_module_cost(
    kind: str,
    capacity,
    P_barg=0.0,
    material: str = "CS",
    D=None,
    cepci_target=None,
    *,
    parallel: bool = True,
    pressure_on: str = "both",
    details: bool = False,
):
    """Bare-module cost of one equipment item (or its parallel units), Turton Eq. (A.4).

    .. math:: C_{BM} = C_p^0 (B_1 + B_2 F_M F_P) \\quad \\text{(vessels, towers, exchangers,
       pumps)}, \\qquad C_{BM} = C_p^0 F_{BM} F_P \\quad \\text{(others)}

    then escalated by ``I_target / 397``. Turton 4th ed. (2012), Appendix A, Eqs. (A.1)-(A.4),
    Tables A.1-A.4, A.6 and Figures A.18-A.19 (coefficients from ``data/turton_*.csv``).

    Parameters
    ----------
    kind : str
        Equipment kind, one of :func:`equipment_kinds` [-].
    capacity : float or array_like
        Total capacity in SI (W, m^3, m^2 or m^3/s, see :func:`equipment_kinds`) [SI].
    P_barg : float or array_like, optional
        Design gauge pressure (fans: pressure rise), default 0 [barg].
    material : str, optional
        Material of construction, one of :func:`materials`, default ``"CS"`` [-].
    D : float or array_like, optional
        Inside diameter of one vessel or tower, required for those kinds [m].
    cepci_target : float or int, optional
        CEPCI of the wanted cost basis, or its year (whole number in [1900, 2100]); default None
        keeps Turton's basis, CEPCI 397 [-].
    parallel : bool, optional
        Split a capacity above the correlation maximum into equal parallel units (default) [-].
    pressure_on : {"both", "tube"}, optional
        Shell-and-tube exchangers: both sides at pressure (default) or tubes only [-].
    details : bool, optional
        Return a dict of the parts instead of the cost [-].

    Returns
    -------
    float or numpy.ndarray or dict
        Bare-module cost of all units, broadcast over ``capacity``, ``P_barg`` and ``D``
        [USD at CEPCI 397 (2001), or at ``cepci_target``]. With ``details=True`` a dict with
        ``bare_module_cost`` and ``purchased_cost`` [USD at the same basis], ``F_P``, ``F_M`` or
        ``F_BM``, ``B1``, ``B2`` [-], ``n_units`` [-], ``unit_capacity`` [SI] and ``cepci`` [-].

    Raises
    ------
    InputError
        Unknown kind or material, bad pressure or diameter.
    OutOfRangeError
        Capacity or pressure far outside the correlation's range.
    """
    row = _row(kind)
    cp = np.asarray(purchased_cost(kind, capacity, parallel=parallel))
    fp = np.asarray(pressure_factor(kind, P_barg, D, pressure_on=pressure_on))
    ratio = _target_ratio(cepci_target)
    out: dict = {}
    if row["bare_module_method"] == "B1B2":
        b1, b2 = bare_module_constants(kind)
        fm = material_factor(kind, material)
        cbm = cp * (b1 + b2 * fm * fp)
        out.update(F_M=fm, B1=b1, B2=b2)
    else:
        fbm = bare_module_factor(kind, material)
        cbm = cp * fbm * fp
        out["F_BM"] = fbm
    cbm = finite_result(f"bare-module cost of {kind}", cbm * ratio, capacity=capacity,
                        P_barg=P_barg, D=D, cepci_target=cepci_target)
    if not details:
        return scalar_or_array(cbm)
    a = check_positive("capacity", capacity)
    n = _n_units(row, a / float(row["capacity_si_factor"])) if parallel else np.ones_like(a)
    out.update(
        bare_module_cost=scalar_or_array(cbm),
        purchased_cost=scalar_or_array(cp * ratio),
        F_P=scalar_or_array(fp),
        n_units=scalar_or_array(n),
        unit_capacity=scalar_or_array(a / n),
        cepci=scalar_or_array(np.asarray(ratio) * TURTON_CEPCI_BASIS),
    )
    return out


def base_bare_module_cost(kind: str, capacity, cepci_target=None, *, parallel: bool = True):
    """Bare-module cost at Turton's base conditions (carbon steel, ambient pressure), C_BM^0.

    .. math:: C_{BM}^0 = C_p^0 (B_1 + B_2) \\qquad\\text{or}\\qquad C_{BM}^0 = C_p^0 F_{BM}^0

    with F_M = F_P = 1, and F_BM^0 the factor of carbon steel (of the base material, F = 1 or
    else the lowest listed, where carbon steel is not listed). Turton 4th ed. (2012), Ch. 7,
    grassroots cost, and Appendix A. Used for the auxiliary-facilities term of the grassroots
    cost (:func:`teakit.costing.capital.grassroots_cost`).

    Parameters
    ----------
    kind : str
        Equipment kind, one of :func:`equipment_kinds` [-].
    capacity : float or array_like
        Total capacity in SI [SI].
    cepci_target : float or int, optional
        CEPCI or year of the wanted cost basis; default CEPCI 397 [-].
    parallel : bool, optional
        Split capacities above the correlation maximum into parallel units [-].

    Returns
    -------
    float or numpy.ndarray
        Base bare-module cost [USD at CEPCI 397 (2001), or at ``cepci_target``].
    """
    row = _row(kind)
    cp = np.asarray(purchased_cost(kind, capacity, parallel=parallel))
    if row["bare_module_method"] == "B1B2":
        b1, b2 = bare_module_constants(kind)
        f = b1 + b2
    else:
        rows = _material_rows(kind)[0]
        cs = rows[rows["material"].str.lower() == "cs"]
        f = float(cs["F_BM"].iloc[0]) if len(cs) else float(rows["F_BM"].min())
    return scalar_or_array(finite_result(f"base bare-module cost of {kind}",
                                         cp * f * _target_ratio(cepci_target), capacity=capacity,
                                         cepci_target=cepci_target))


def vessel_diameter(volume, L_over_D=3.0):
    """Inside diameter of a cylindrical vessel of given volume and length-to-diameter ratio.

    .. math:: D = \\left(\\frac{4 V}{\\pi (L/D)}\\right)^{1/3}

    Heads neglected; L/D = 3 is a common-practice default for process vessels.

    Parameters
    ----------
    volume : float or array_like
        Vessel volume [m^3].
    L_over_D : float or array_like, optional
        Length over diameter, in [1, 20]; default 3 (common practice) [-].

    Returns
    -------
    float or numpy.ndarray
        Inside diameter [m].
    """
    v = check_positive("volume", volume, unit="m^3")
    r = check_range("L_over_D", L_over_D, 1.0, 20.0)
    v, r = broadcast_arrays(volume=v, L_over_D=r)
    with np.errstate(over="ignore"):
        d = (4.0 * v / (math.pi * r)) ** (1.0 / 3.0)
    return scalar_or_array(finite_result("vessel diameter", d, volume=v, L_over_D=r))


def vessel_cost_from_mass(mass_kg, cost_per_kg=10.0, installation_factor=4.07):
    """Installed vessel cost from its steel mass: an alternative to the volume correlation.

    .. math:: C = m \\, c_{kg} \\, f_\\mathrm{inst}

    Use it when the wall thickness (and so the mass) comes from a pressure-vessel sizing, e.g. at
    pressures above the range of Turton's vessel pressure factor.

    Parameters
    ----------
    mass_kg : float or array_like
        Mass of the shell and heads [kg].
    cost_per_kg : float or array_like, optional
        Fabricated cost of the vessel per kg of steel; default 10 USD/kg, an **assumption**
        (order of magnitude for shop-fabricated carbon-steel pressure vessels in the early
        2020s, no published source): pass your own, in money of your cost year [USD/kg].
    installation_factor : float or array_like, optional
        Ratio of installed (bare-module) to purchased cost; default 4.07 = B1 + B2 of vertical
        vessels (2.25 + 1.82, Turton 4th ed. Table A.4, from memory), an **assumption** that
        treats the mass-based price as the base purchased cost [-].

    Returns
    -------
    float or numpy.ndarray
        Installed vessel cost [USD of the cost year of ``cost_per_kg``].
    """
    m = check_positive("mass_kg", mass_kg, unit="kg")
    c = check_positive("cost_per_kg", cost_per_kg, unit="USD/kg")
    f = check_range("installation_factor", installation_factor, 1.0, 10.0)
    m, c, f = broadcast_arrays(mass_kg=m, cost_per_kg=c, installation_factor=f)
    with np.errstate(over="ignore"):
        cost = m * c * f
    return scalar_or_array(finite_result("vessel cost", cost, mass_kg=m, cost_per_kg=c,
                                         installation_factor=f))
