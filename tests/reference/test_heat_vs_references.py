"""Heat duty and adiabatic temperature against outside references:

- Cantera 3 on the same NASA polynomials (the entries' own coefficients): stream enthalpies, the
  adiabatic temperature of a frozen product mixture (``gas.HP = h_reactants, P``), the duty at
  the equilibrium conversion (``equilibrate("TP")`` of the reaction's gases, then Cantera's
  enthalpy sums) and the adiabatic temperature at equilibrium (``equilibrate("HP")``), each
  also against the median of the per-draw values from the call's draws;
- the decision record's heat section against the same Cantera sums;
- CRC Handbook and ATcT formation enthalpies as carried by the ``chemicals`` package: the heat of
  combustion of methane (liquid water) and the calcination enthalpy of calcite at 298.15 K.
"""

from __future__ import annotations

import importlib.util
from pathlib import Path

import pytest

import feasibly
from feasibly.heat import adiabatic_temperature, heat_duty

ct = pytest.importorskip("cantera")
chem_reaction = pytest.importorskip("chemicals.reaction")

_spec = importlib.util.spec_from_file_location("_refs", Path(__file__).with_name("_refs.py"))
assert _spec is not None and _spec.loader is not None
_refs = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(_refs)

LIB = feasibly.default_library()


def _gas(ids: list[str]):
    species = [_refs.cantera_species(LIB[i]) for i in ids]
    return ct.Solution(thermo="ideal-gas", species=species)


@pytest.mark.parametrize("T", [400.0, 1000.0, 1800.0])
def test_duty_equals_cantera_enthalpy_sums(T: float) -> None:
    """Products at T minus feed at 298.15 K, as Cantera sums the same species' h(T)."""
    d = heat_duty(
        "CH4 + 2 O2 -> CO2 + 2 H2O(g)", f"{T} K", "CH4:1, O2:2.5, N2:9", T_feed="298.15 K"
    )

    def h(i: str, t: float) -> float:
        return _refs.cantera_species(LIB[i]).thermo.h(t) / 1000.0  # J/kmol → J/mol

    ids = ("CH4(g)", "O2(g)", "N2(g)", "CO2(g)", "H2O(g)")
    h_in = h(ids[0], 298.15) + 2.5 * h(ids[1], 298.15) + 9 * h(ids[2], 298.15)
    h_out = h(ids[3], T) + 2 * h(ids[4], T) + 0.5 * h(ids[1], T) + 9 * h(ids[2], T)
    # At a polynomial breakpoint (1000 K for the NASA-9 gases) two implementations may take
    # adjacent intervals, whose h differ by the record's own discontinuity there: allow the
    # measured jump of each product term (Cantera on either side, ±1e-9 K), not a round number.
    jump = sum(
        abs(n) * abs(h(i, T + 1e-9) - h(i, T - 1e-9))
        for i, n in (("CO2(g)", 1), ("H2O(g)", 2), ("O2(g)", 0.5), ("N2(g)", 9))
    )
    # 1e-9 relative: the same polynomials in two implementations, rounding only
    assert abs(d.J - (h_out - h_in)) <= 1e-9 * abs(h_out - h_in) + jump


@pytest.mark.parametrize(
    ("feed", "fuel"),
    [("CH4:1, O2:2, N2:7.52", "CH4"), ("CH4:1, O2:3, N2:11.28", "CH4"), ("CH4:1, O2:2", "CH4")],
)
def test_adiabatic_temperature_equals_cantera_frozen_hp(feed: str, fuel: str) -> None:
    a = adiabatic_temperature("CH4 + 2 O2 -> CO2 + 2 H2O(g)", feed, "298.15 K")
    gas = _gas(["CH4(g)", "O2(g)", "N2(g)", "CO2(g)", "H2O(g)"])
    amounts = dict(item.split(":") for item in feed.replace(" ", "").split(","))
    x_in = {f"{k}(g)": float(v) for k, v in amounts.items()}
    gas.TPX = 298.15, ct.one_atm, x_in
    h_mass = gas.enthalpy_mass
    o2_left = float(amounts["O2"]) - 2.0
    x_out = {"CO2(g)": 1.0, "H2O(g)": 2.0, "N2(g)": float(amounts.get("N2", 0.0))}
    if o2_left > 0:
        x_out["O2(g)"] = o2_left
    gas.TPX = 1500.0, ct.one_atm, x_out  # mass is conserved: the same kg as the feed
    gas.HP = h_mass, ct.one_atm
    # 1e-4 K: Cantera's Newton iteration on T stops near 1e-6 relative in enthalpy
    assert a.T_K == pytest.approx(gas.T, abs=1e-3)


def test_heat_of_combustion_of_methane_vs_atct_and_crc() -> None:
    """ΔcH°(CH4, 298.15 K) to CO2(g) and H2O(l): ATcT gas values and the CRC liquid water value
    carried by `chemicals` give −890.6 kJ/mol."""
    hf = {
        "CH4": chem_reaction.Hfg("74-82-8", method="ATCT_G"),
        "CO2": chem_reaction.Hfg("124-38-9", method="ATCT_G"),
        "H2O(l)": chem_reaction.Hfl("7732-18-5"),
    }
    reference = hf["CO2"] + 2 * hf["H2O(l)"] - hf["CH4"]
    d = heat_duty("CH4 + 2 O2 -> CO2 + 2 H2O(l)", "298.15 K", "CH4:1, O2:2")
    # 1 kJ/mol: the sum of the sources' stated uncertainties of these formation enthalpies
    # (ATcT CH4 ±0.06, CO2 ±0.015, water ±0.04 kJ/mol, and the library's own) is well inside it
    assert d.J_per_mol_reaction == pytest.approx(reference, abs=1000.0)


def test_calcination_enthalpy_vs_crc() -> None:
    """CaCO3(calcite) → CaO + CO2 at 298.15 K from the CRC solid values in `chemicals`."""
    reference = (
        chem_reaction.Hfs("1305-78-8")
        + chem_reaction.Hfg("124-38-9", method="ATCT_G")
        - chem_reaction.Hfs("471-34-1")
    )
    d = heat_duty("CaCO3 -> CaO + CO2", "298.15 K", "CaCO3:1")
    # 2 kJ/mol: the CRC solid values are given to 0.1 kJ/mol and the library's CaCO3/CaO
    # entries differ from them within their own stated u (see data/source-gaps.json)
    assert d.J_per_mol_reaction == pytest.approx(reference, abs=2000.0)


#: JANAF tables of oxides, the factor that scales ΔfG° to one mole of O2 and the library entry
#: whose documented ΔfH° gap to that table (data/source-gaps.json) shifts the line.
_JANAF_OXIDES = {
    "MgO": ("Mg-008", 2.0, "MgO(cr)"),
    "Al2O3": ("Al-096", 2.0 / 3.0, "Al2O3(cr,alpha)"),
    "Cu2O": ("Cu-019", 2.0, "Cu2O(cr)"),
    "CuO": ("Cu-015", 2.0, "CuO(cr)"),
    "TiO2": ("O-043", 1.0, "TiO2(cr,rutile)"),
    "Fe2O3": ("Fe-030", 2.0 / 3.0, "Fe2O3(cr)"),
}


def test_formation_lines_vs_janaf() -> None:
    """Ellingham lines per mole of O2 against NIST-JANAF ΔfG° of the oxides (4th ed., via the
    `janaf` package): within 1 kJ/mol plus the oxide's documented ΔfH° gap to JANAF (NASA 2002
    differs from JANAF by up to 1.26 kJ/mol for these, data/source-gaps.json), and JANAF inside
    the 95 % band."""
    from feasibly.comparison import formation_lines

    temps = [600.0, 800.0, 1000.0, 1200.0]
    lines = formation_lines(
        list(_JANAF_OXIDES), T_range=("600 K", "1200 K"), points=4, samples=20_000, seed=4
    )
    assert lines.bands is not None
    for i, (index, per_o2, sid) in enumerate(_JANAF_OXIDES.values()):
        # NASA 2002 ΔfH° differs from JANAF by the build's documented gap (MgO(cr): 355.6 J/mol,
        # JANAF Mg-008 − thermo.inp); the line moves by per_o2 times it, on top of 1 kJ/mol
        gap = _refs.documented_janaf_gap(sid, index, LIB[sid].dHf.source) or 0.0
        for k, t in enumerate(temps):
            reference = per_o2 * _refs.janaf_dfG_interp(index, t)
            tol = 1000.0 + per_o2 * abs(gap)
            assert lines.G[i, k] == pytest.approx(reference, abs=tol), (lines.labels[i], t)
            assert lines.bands[0, i, k] < reference < lines.bands[-1, i, k]


def _se_median(values) -> float:
    """Standard error of a sample median: √(π/2)·σ/√N for a near-normal output (the asymptotic
    variance of the median, π σ²/(2N))."""
    import math

    import numpy as np

    return math.sqrt(math.pi / 2) * float(np.std(values, ddof=1)) / math.sqrt(len(values))


def test_duty_at_equilibrium_conversion_vs_cantera_tp_equilibrium() -> None:
    """Water-gas shift at 1000 K, 1 bar, CO:1 + H2O:1 fed at 500 K. Cantera's TP equilibrium of
    the four gases (one independent reaction among them) on the same polynomials gives the
    extent; Cantera's h(T) sums give the duty. feasibly's nominal extent and duty match it, and
    the median of the per-draw duties (each draw at its own extent) lies within 4 standard
    errors of it."""
    gas = _gas(["CO(g)", "H2O(g)", "CO2(g)", "H2(g)"])
    gas.TPX = 1000.0, 1e5, {"CO(g)": 1.0, "H2O(g)": 1.0}
    gas.equilibrate("TP", rtol=1e-14, max_iter=500)
    n = {name: 2.0 * x for name, x in zip(gas.species_names, gas.X, strict=True)}  # Δn = 0

    def h(i: str, t: float) -> float:
        return _refs.cantera_species(LIB[i]).thermo.h(t) / 1000.0  # J/kmol → J/mol

    xi = n["CO2(g)"]
    h_out = sum(amount * h(name, 1000.0) for name, amount in n.items())
    h_in = h("CO(g)", 500.0) + h("H2O(g)", 500.0)
    reference = (h_out - h_in) / xi
    call = feasibly.assess_uncertainty("CO + H2O -> CO2 + H2", T="1000 K", samples=8192, seed=3)
    d = heat_duty("CO + H2O -> CO2 + H2", "1000 K", "CO:1, H2O:1", T_feed="500 K",
                  conversion="equilibrium", call=call)  # fmt: skip
    # 1e-8 relative: Cantera's equilibrium stops at rtol 1e-14 in its element potentials
    assert d.extent == pytest.approx(xi, rel=1e-8)
    # The duty is a difference of enthalpies some 30 times larger than itself: 1e-8 of those
    # terms (the two implementations' h(T) agree to about 1e-9 each, NASA-9 regions included)
    assert d.J_per_mol_reaction == pytest.approx(
        reference, abs=1e-8 * (abs(h_out) + abs(h_in)) / xi
    )
    import numpy as np

    assert d.draws is not None and d.interval is not None
    assert abs(float(np.median(d.draws)) - reference) < 4 * _se_median(d.draws)
    assert d.interval[0] < reference < d.interval[1]


def test_adiabatic_equilibrium_vs_cantera_hp_equilibrium() -> None:
    """SO2 oxidation (an invented converter feed: 10 % SO2, 11 % O2, 79 % N2 at 700 K, 1 bar):
    Cantera's HP equilibrium of SO2, O2, SO3 and N2 on the same polynomials (one independent
    reaction) gives the adiabatic temperature and the SO3 formed; feasibly's nominal values
    match, and the median of the per-draw temperatures lies within 4 standard errors."""
    gas = _gas(["SO2(g)", "O2(g)", "SO3(g)", "N2(g)"])
    gas.TPX = 700.0, 1e5, {"SO2(g)": 10.0, "O2(g)": 11.0, "N2(g)": 79.0}
    gas.equilibrate("HP", rtol=1e-14, max_iter=1000)
    # amounts from mole fractions, scaled by nitrogen, which passes through unchanged (79 mol)
    so3 = gas.X[gas.species_index("SO3(g)")] * 79.0 / gas.X[gas.species_index("N2(g)")]
    call = feasibly.assess_uncertainty("2 SO2 + O2 -> 2 SO3", T="700 K", samples=4096, seed=9)
    hot = adiabatic_temperature("2 SO2 + O2 -> 2 SO3", "SO2:10, O2:11, N2:79", "700 K",
                                conversion="equilibrium", call=call)  # fmt: skip
    # 1e-3 K and 1e-7 relative: Cantera's HP iteration stops near 1e-9 relative in enthalpy
    assert hot.T_K == pytest.approx(gas.T, abs=1e-3)
    assert hot.extent == pytest.approx(so3 / 2.0, rel=1e-7)
    import numpy as np

    assert hot.draws is not None and hot.interval is not None
    assert abs(float(np.median(hot.draws)) - gas.T) < 4 * _se_median(hot.draws)
    assert hot.interval[0] < gas.T < hot.interval[1]


def test_recorded_heat_section_vs_cantera_enthalpy_sums() -> None:
    """The decision record's duties (per mol, per kg product, per kg feed) are Cantera's sums of
    the same species' h(T) for the recorded feed, temperatures and conversion."""
    from feasibly.records import record_from

    a = feasibly.assess("CH4 + 2 O2 -> CO2 + 2 H2O(g)", T_range=("600 K", "1200 K"), points=3)
    rec = record_from(a, heat={"feed": "CH4:1, O2:2.5, N2:9", "T_feed": "298.15 K"})

    def h(i: str, t: float) -> float:
        return _refs.cantera_species(LIB[i]).thermo.h(t) / 1000.0

    m = {i: LIB[i].molar_mass / 1000 for i in ("CH4(g)", "O2(g)", "N2(g)", "CO2(g)", "H2O(g)")}
    feed_kg = m["CH4(g)"] + 2.5 * m["O2(g)"] + 9 * m["N2(g)"]
    for row in rec["results"]["heat"]["rows"]:
        T = row["T_K"]
        h_in = h("CH4(g)", 298.15) + 2.5 * h("O2(g)", 298.15) + 9 * h("N2(g)", 298.15)
        h_out = h("CO2(g)", T) + 2 * h("H2O(g)", T) + 0.5 * h("O2(g)", T) + 9 * h("N2(g)", T)
        # 1e-9 relative: the same polynomials in two implementations, rounding only
        assert row["duty_J_per_mol"] == pytest.approx(h_out - h_in, rel=1e-9)
        assert row["duty_J_per_kg_feed"] == pytest.approx((h_out - h_in) / feed_kg, rel=1e-9)
        # per kg of the heaviest product formed: 1 CO2 (44 g) outweighs 2 H2O (36 g)
        per_kg_co2 = (h_out - h_in) / m["CO2(g)"]
        assert row["duty_J_per_kg_product"] == pytest.approx(per_kg_co2, rel=1e-9)
    assert rec["results"]["heat"]["product"] == "CO2"


def test_exotherm_caution_quotes_cantera_adiabatic_temperature() -> None:
    """The exotherm caution's adiabatic temperature (CO + H2O fed undiluted at 500 K, fully
    converted) is Cantera's frozen HP temperature of the products on the same polynomials, and
    the quoted 95 % interval brackets it."""
    import re

    from feasibly.heat import cautions_with_draws

    gas = _gas(["CO(g)", "H2O(g)", "CO2(g)", "H2(g)"])
    gas.TPX = 500.0, 1e5, {"CO(g)": 1.0, "H2O(g)": 1.0}
    h_mass = gas.enthalpy_mass
    gas.TPX = 1000.0, 1e5, {"CO2(g)": 1.0, "H2(g)": 1.0}  # same mass as the feed
    gas.HP = h_mass, 1e5
    a = feasibly.assess("CO + H2O -> CO2 + H2", T="500 K")
    call = feasibly.assess_uncertainty(a.reaction, T="500 K", samples=4096, seed=3)
    (message,) = [
        c.message
        for c in cautions_with_draws(a.cautions, call, a.standard.T, a.standard.dH)
        if c.kind == "strongly exothermic"
    ]
    found = re.search(r"about (\d+) K \(95 % interval (\d+)–(\d+) K", message)
    assert found is not None, message
    quoted, lo, hi = (float(g) for g in found.groups())
    assert quoted == round(gas.T)  # the caution rounds to whole kelvin
    assert lo <= gas.T <= hi
