"""Non-ideal gases: Peng–Robinson fugacity coefficients and measured high-pressure equilibria.

Outside references, named per check:

- the ``thermo`` package (Caleb Bell et al., MIT), ``thermo.PR78MIX``: Peng–Robinson ln φ (the
  1978 κ(ω) above ω = 0.49) of the same mixtures from the same constants (an independent
  implementation);
- the ``chemicals`` package: the critical constants the shipped table was extracted from;
- ammonia synthesis, 3:1 H2:N2: A.T. Larson, R.L. Dodge, J. Am. Chem. Soc. 45 (1923) 2918 (10–
  100 atm) and A.T. Larson, J. Am. Chem. Soc. 46 (1924) 367 (300–1000 atm), equilibrium mole
  per cent NH3, as analysed by L.J. Gillespie, J.A. Beattie, Phys. Rev. 36 (1930) 743 (the
  pressure dependence of K_p measured there is the fugacity effect);
- methanol synthesis: G.H. Graaf, P.J.J.M. Sijtsema, E.J. Stamhuis, G.E.H. Joosten, Chem. Eng.
  Sci. 41 (1986) 2883, equilibrium constants fitted to their measurements (fugacity-corrected).

None of these papers is available here as text: the numbers below were entered from memory
and are marked so; the tolerances are set for that (a few per cent), and the checks that
matter — the ideal gas agreeing at 10 atm, Peng–Robinson moving every high-pressure answer
towards the measurement — hold by margins far larger than a misremembered last digit.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import feasibly
from feasibly.equilibrium import equilibrium_extent
from feasibly.equilibrium.conversion import non_ideality
from feasibly.thermo import critical_constants, ln_fugacity_coefficients

LIB = feasibly.default_library()
R = 8.314462618  # J/(mol K), CODATA 2018 (from memory of the SI definition)

thermo = pytest.importorskip("thermo")
chemicals = pytest.importorskip("chemicals")


# --- the equation of state itself ---------------------------------------------------------------
@pytest.mark.parametrize(
    ("ids", "T", "P", "x"),
    [
        (("N2(g)", "H2(g)", "NH3(g)"), 723.15, 300 * 101325.0, (0.16, 0.49, 0.35)),
        (("N2(g)", "H2(g)", "NH3(g)", "Ar(g)"), 600.0, 200e5, (0.2, 0.55, 0.2, 0.05)),
        (
            ("CO(g)", "H2(g)", "CH3OH(g)", "CO2(g)", "H2O(g)"),
            523.15,
            80e5,
            (0.15, 0.6, 0.1, 0.1, 0.05),
        ),
        (("CH4(g)", "CO2(g)"), 320.0, 50e5, (0.7, 0.3)),
    ],
)
def test_peng_robinson_matches_the_thermo_package(ids, T, P, x):
    crit = critical_constants([LIB[i] for i in ids])
    ours = ln_fugacity_coefficients(np.array([T]), np.array([P]), np.array([x]), crit)[0]
    eos = thermo.PR78MIX(
        Tcs=[c.Tc for c in crit],
        Pcs=[c.Pc for c in crit],
        omegas=[c.omega for c in crit],
        zs=list(x),
        T=T,
        P=P,
    )
    # one root above the mixture's critical point: thermo files it as gas or liquid
    ref = np.array(eos.lnphis_g if hasattr(eos, "lnphis_g") else eos.lnphis_l)
    # 1e-7: the two codes round Ωa, Ωb differently (0.45723553 vs 0.457235529…), ~1e-9 in ln φ
    np.testing.assert_allclose(ours, ref, atol=1e-7)


def test_shipped_critical_constants_are_those_of_chemicals():
    """Every row of data/critical-constants.csv equals chemicals' value by the method named."""
    from chemicals import acentric, critical

    table = feasibly.thermo.fugacity._table()
    assert len(table) > 100
    for cas, c in table.items():
        methods = dict(
            part.split(" ", 1) for part in c.source.removeprefix("chemicals: ").split(", ")
        )
        # 5e-6: the table keeps 6 significant digits (half a unit in the 6th is 5e-6 at worst)
        assert c.Tc == pytest.approx(critical.Tc(cas, method=methods["Tc"]), rel=5e-6), cas
        assert c.Pc == pytest.approx(critical.Pc(cas, method=methods["Pc"]), rel=5e-6), cas
        # ω is written with 6 significant digits too (1e-6 absolute for values near zero)
        omega = acentric.omega(cas, method=methods["ω"])
        assert c.omega == pytest.approx(omega, rel=5e-6, abs=1e-6), cas


# --- ammonia synthesis ----------------------------------------------------------------------------
#: Equilibrium mole per cent NH3 from a 3:1 H2:N2 feed: °C → {atm: mol %}. From memory of the
#: tables of Larson & Dodge (1923) and Larson (1924), as reprinted in chemical-engineering texts.
LARSON_DODGE = {
    450.0: {10: 2.04, 30: 5.80, 50: 9.17, 100: 16.36, 300: 35.5, 600: 53.6},
    500.0: {10: 1.20, 30: 3.49, 50: 5.58, 100: 10.61, 300: 26.4, 600: 42.2},
}


def _y_nh3(T_C: float, P_atm: float, model: str) -> float:
    x = equilibrium_extent(
        "N2 + 3 H2 -> 2 NH3", f"{T_C + 273.15} K", f"{P_atm} atm", "N2:1, H2:3", key="N2",
        gas_model=model,
    )  # fmt: skip
    n = x.amounts[0]
    return 100.0 * float(n[2] / n.sum())


@pytest.mark.parametrize(("T_C", "P_atm"), [(t, p) for t, row in LARSON_DODGE.items() for p in row])
def test_ammonia_synthesis_against_larson_and_dodge(T_C, P_atm):
    measured = LARSON_DODGE[T_C][P_atm]
    ideal = _y_nh3(T_C, P_atm, "ideal")
    pr = _y_nh3(T_C, P_atm, "peng-robinson")
    print(f"{T_C:g} °C {P_atm:g} atm: measured {measured}, ideal {ideal:.2f}, PR {pr:.2f} mol %")
    if P_atm <= 50:
        # near-ideal (the fugacity effect is ≤ 2 % here, the size of the measurement's and the
        # data's uncertainty): both models agree with the measurement within 3 %
        assert ideal == pytest.approx(measured, rel=0.03)
        assert pr == pytest.approx(measured, rel=0.03)
        return
    # Peng–Robinson moves the answer towards the measurement …
    assert abs(pr - measured) < abs(ideal - measured)
    # … and halves the gap or better: 100 atm within 3 % (ideal: 6 % low), 300 atm within 8 %
    # (ideal: 13–16 % low), 600 atm within 10 % (ideal: 20–22 % low); Peng–Robinson with
    # k_ij = 0 stays short of the measured effect, as the K_p test below shows
    assert abs(pr - measured) < 0.5 * abs(ideal - measured)
    assert pr == pytest.approx(measured, rel={100: 0.03, 300: 0.08, 600: 0.10}[P_atm])


#: K_p (atm⁻¹) of ½ N2 + 3/2 H2 → NH3 at 450 °C from the same measurements, by pressure (atm);
#: from memory of the values Gillespie & Beattie (1930) analysed. Their rise with pressure is the
#: fugacity effect: K = K_p K_φ is constant, so ln K_φ(P) − ln K_φ(10) = −ln(K_p(P)/K_p(10)).
KP_450 = {10: 0.00659, 30: 0.00676, 50: 0.00690, 100: 0.00725, 300: 0.00884}


def test_ammonia_kp_pressure_dependence_has_the_measured_sign_and_size():
    """Peng–Robinson's ln K_φ, relative to 10 atm, has the measured sign and rises with P;
    with k_ij = 0 it gives 40–70 % of the measured effect (printed; the share grows with P),
    a known limit of a cubic equation of state for H2 mixtures — still far closer than the
    ideal gas's zero."""

    def ln_kphi(p: float) -> float:
        x = equilibrium_extent(
            "0.5 N2 + 1.5 H2 -> NH3", "723.15 K", f"{p} atm", "N2:1, H2:3", key="N2",
            gas_model="peng-robinson",
        )  # fmt: skip
        return float(x.fugacity_term[0])

    base = ln_kphi(10)
    shares = []
    for p, kp in KP_450.items():
        if p == 10:
            continue
        measured = -math.log(kp / KP_450[10])
        ours = ln_kphi(p) - base
        shares.append(ours / measured)
        print(f"{p} atm: ln K_φ rel. 10 atm measured {measured:+.4f}, Peng–Robinson {ours:+.4f}")
        assert ours < 0 and measured < 0
    assert all(0.4 <= s <= 1.2 for s in shares), shares
    assert np.all(np.diff(shares) > 0)  # the share grows with pressure


# --- methanol synthesis ---------------------------------------------------------------------------
def _graaf_log10_k(T: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Graaf et al. (1986): log10 K1 (CO + 2 H2 ⇌ CH3OH, bar⁻²) and log10 K2 (CO2 + H2 ⇌
    CO + H2O); from memory: log10 K1 = 5139/T − 12.621, log10 K2 = −2073/T + 2.029."""
    return 5139.0 / T - 12.621, -2073.0 / T + 2.029


def test_methanol_equilibrium_constants_against_graaf():
    """Graaf's constants are fugacity-based (their measured K_p corrected by an equation of
    state), i.e. K°: our K° from the library data must match within the data's uncertainty plus
    what memory of the fit may have lost. Measured: log10 K1 differs by +0.074…+0.084 and
    log10 K2 by −0.017…−0.019 over 473–548 K; allowed: 3 u(ln K) + 0.1 in ln K."""
    T = np.array([473.15, 498.15, 523.15, 548.15])
    k1, k2 = _graaf_log10_k(T)
    for eq, feed, key, ref in (
        ("CO + 2 H2 -> CH3OH", "CO:1, H2:2", "CO", k1),
        ("CO2 + H2 -> CO + H2O", "CO2:1, H2:1", "CO2", k2),
    ):
        rxn = feasibly.Reaction.parse(eq)
        ln_k = -feasibly.standard_properties(rxn, T).dG / (R * T)
        u = np.array([r["u_lnK"] for r in non_ideality(rxn, (T, "K"), "1 bar", feed, key)["rows"]])
        diff = ln_k - ref * math.log(10)
        print(eq, "Δ log10 K:", np.round(diff / math.log(10), 3), "u(ln K):", np.round(u, 3))
        assert np.all(np.abs(diff) <= 3 * u + 0.1), (eq, diff, u)


def test_methanol_synthesis_fugacity_raises_conversion():
    """At 50–100 bar and 200–275 °C the fugacity coefficients of methanol are well below 1 and
    those of H2 above: K_φ < 1, so the real-gas equilibrium converts more than the ideal one, as
    Graaf et al. found (their measured K_p exceeded the ideal-gas K; from memory). Here: 3–7
    percentage points of CO conversion. Against the data's uncertainty of ln K as calibrated from
    the spread between compilations (u ≈ 0.36 here), the correction is about 1–2 u at 50 bar
    and more than 2 u at 100 bar, so the warning is earned at 100 bar."""
    for T, P, n_u in ((498.15, 50, 1.0), (523.15, 50, 0.5), (523.15, 100, 2.0)):
        rows = non_ideality("CO + 2 H2 -> CH3OH", f"{T} K", f"{P} bar", "CO:1, H2:2", "CO")["rows"][
            0
        ]
        assert rows["fugacity_term_lnK"] < -n_u * rows["u_lnK"]
        assert rows["conversion_peng_robinson"] > rows["conversion_ideal_gas"] + 0.02


# --- the call at the user's conditions: ΔrG = ΔrG° + RT ln Q with fugacities --------------------
def _thermo_ln_phi(ids, T, P, y):
    crit = critical_constants([LIB[i] for i in ids])
    eos = thermo.PR78MIX(
        Tcs=[c.Tc for c in crit],
        Pcs=[c.Pc for c in crit],
        omegas=[c.omega for c in crit],
        zs=list(y),
        T=T,
        P=P,
    )
    # one root above the mixture's critical point: thermo files it as gas or liquid
    return np.array(eos.lnphis_g if hasattr(eos, "lnphis_g") else eos.lnphis_l)


@pytest.mark.parametrize(
    ("equation", "ids", "nu", "T", "pressures_bar"),
    [
        (
            "N2 + 3 H2 -> 2 NH3",
            ("N2(g)", "H2(g)", "NH3(g)"),
            (-1, -3, 2),
            723.15,
            {"N2": 50.0, "H2": 150.0, "NH3": 100.0},
        ),
        (
            "CO + 2 H2 -> CH3OH",
            ("CO(g)", "H2(g)", "CH3OH(g)"),
            (-1, -2, 1),
            523.15,
            {"CO": 15.0, "H2": 60.0, "CH3OH": 5.0},
        ),
        (
            "CO2 + H2 -> CO + H2O",
            ("CO2(g)", "H2(g)", "CO(g)", "H2O(g)"),
            (-1, -1, 1, 1),
            500.0,
            {"CO2": 10.0, "H2": 60.0, "CO": 5.0, "H2O": 2.0},
        ),
    ],
)
def test_call_at_partial_pressures_uses_the_fugacities_of_the_thermo_package(
    equation, ids, nu, T, pressures_bar
):
    """ΔrG(Peng–Robinson) − ΔrG(ideal) = RT Σ ν ln φ with φ from thermo.PR78MIX for the mixture
    of the gases given, at the sum of their partial pressures."""
    pp = {k: f"{v} bar" for k, v in pressures_bar.items()}
    ideal = feasibly.assess(equation, T=f"{T} K", partial_pressures=pp)
    pr = feasibly.assess(equation, T=f"{T} K", partial_pressures=pp, gas_model="peng-robinson")
    P = sum(pressures_bar.values()) * 1e5
    y = np.array(list(pressures_bar.values())) * 1e5 / P
    ref = float(np.dot(nu, _thermo_ln_phi(ids, T, P, y)))
    # 1e-7 in ln units: the two codes' Ωa, Ωb rounding (as in the test of ln φ above)
    assert pr.fugacity_term[0] == pytest.approx(ref, abs=1e-7)
    assert pr.dG_actual[0] - ideal.dG_actual[0] == pytest.approx(R * T * ref, abs=1e-6 * R * T)
    assert pr.log10_Q - ideal.log10_Q == pytest.approx(ref / math.log(10), abs=1e-7)


def test_call_at_required_conversion_uses_the_fugacities_of_the_thermo_package():
    """At the composition of 30 % conversion of N2 (feed N2:1, H2:3, Ar:0.2, 200 bar) the
    correction is RT Σ ν ln φ with φ from thermo.PR78MIX for that mixture, argon included."""
    T = 700.0
    at = {"feed": "N2:1, H2:3, Ar:0.2", "key": "N2", "required": 0.3, "P": "200 bar"}
    ideal = feasibly.assess("N2 + 3 H2 -> 2 NH3", T=f"{T} K", at_conversion=at)
    pr = feasibly.assess("N2 + 3 H2 -> 2 NH3", T=f"{T} K", at_conversion=at, gas_model="pr")
    n = np.array([0.7, 3 - 0.9, 0.6, 0.2])  # N2, H2, NH3, Ar at 30 % conversion of N2
    ln_phi = _thermo_ln_phi(("N2(g)", "H2(g)", "NH3(g)", "Ar(g)"), T, 200e5, n / n.sum())
    ref = float(np.dot([-1, -3, 2], ln_phi[:3]))
    assert pr.fugacity_term[0] == pytest.approx(ref, abs=1e-7)
    assert pr.dG_actual[0] - ideal.dG_actual[0] == pytest.approx(R * T * ref, abs=1e-6 * R * T)


@pytest.mark.parametrize("T_C", sorted(LARSON_DODGE))
def test_ammonia_call_at_the_measured_equilibrium_is_near_zero_with_fugacities(T_C):
    """At the measured equilibrium composition (Larson & Dodge 1923, Larson 1924; 3:1 H2:N2)
    ΔrG is 0 by definition. With Peng–Robinson fugacities the call's ΔrG there lies within 2 u
    (k = 2) of 0 up to 100 atm, u being the data's standard uncertainty of ΔrG° (GUM; 0.60 and
    0.64 kJ/mol at 450 and 500 °C on the recalibrated data). At 300 and 600 atm the ideal gas
    lies beyond 2 u (3.2–7.8 kJ/mol) and Peng–Robinson removes more than half of that gap, but
    not all of it: with k_ij = 0 it gives 40–70 % of the measured fugacity effect (the K_p test
    above), which leaves +0.8 and +1.6 kJ/mol at 300 atm (1.3 u and 2.4 u) and +2.2 and
    +2.6 kJ/mol at 600 atm. So the test asks for 2 u up to 100 atm and for "closer to 0 by at
    least half" from 300 atm on."""
    from feasibly.uncertainty import gas_model_warning

    T = T_C + 273.15
    for P_atm, y_pc in LARSON_DODGE[T_C].items():
        P, y = P_atm * 101325.0, y_pc / 100.0
        pp = {
            "N2": ((1 - y) / 4 * P, "Pa"),
            "H2": (3 * (1 - y) / 4 * P, "Pa"),
            "NH3": (y * P, "Pa"),
        }
        ideal = feasibly.assess("N2 + 3 H2 -> 2 NH3", T=(T, "K"), partial_pressures=pp)
        pr = feasibly.assess(
            "N2 + 3 H2 -> 2 NH3", T=(T, "K"), partial_pressures=pp, gas_model="peng-robinson"
        )
        u = non_ideality("N2 + 3 H2 -> 2 NH3", (T, "K"), "1 bar", "N2:1, H2:3", "N2")["rows"][0][
            "u_lnK"
        ] * (R * T)
        g_id, g_pr = float(ideal.dG_actual[0]), float(pr.dG_actual[0])
        print(
            f"{T_C:g} °C {P_atm} atm: ΔrG ideal {g_id / 1e3:+.2f}, Peng–Robinson "
            f"{g_pr / 1e3:+.2f} kJ/mol; u(ΔrG°) {u / 1e3:.2f} kJ/mol"
        )
        if P_atm <= 50:
            # near-ideal: both within 2 u of the measured equilibrium
            assert abs(g_id) < 2 * u and abs(g_pr) < 2 * u
            continue
        assert abs(g_pr) < abs(g_id)
        if P_atm <= 100:
            assert abs(g_pr) < 2 * u
        else:
            assert abs(g_pr) < 0.5 * abs(g_id)
        if P_atm >= 300:
            assert abs(g_id) > 2 * u
            # the ideal-gas call warns, with the size of the correction
            warning = gas_model_warning(ideal)
            assert warning is not None and f"{g_pr / 1e3 - g_id / 1e3:+.3g} kJ/mol" in warning
