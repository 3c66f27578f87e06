"""The gas model in the call itself: ΔrG = ΔrG° + RT ln Q with fugacities f_i = φ_i y_i P at the
user's partial pressures or at the composition of a required conversion, in the Python function,
the Monte Carlo call, the command line and the decision record; the warning an ideal-gas call
gets where the correction exceeds the data's uncertainty; the refusals.

References: the equilibrium-extent solver with Peng–Robinson fugacities (feasibly.equilibrium,
which shares no code with the quotient here) for the sign of the call at a required conversion;
the GUM first-order uncertainty of ΔrG° (feasibly.uncertainty.linear) for the warning's
threshold. φ against the ``thermo`` package and the measured ammonia equilibria are in
tests/reference/test_nonideal_equilibria.py.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

import feasibly
from feasibly.cli import main
from feasibly.errors import InvalidInput
from feasibly.records import make_record, verify_record
from feasibly.records.document import _seal
from feasibly.thermo import assess
from feasibly.uncertainty import assess_uncertainty, gas_model_warning

R = 8.314462618  # J/(mol K), CODATA 2018 (from memory of the SI definition)
NH3 = "N2 + 3 H2 -> 2 NH3"
#: Near the measured equilibrium at 450 °C and 300 atm (Larson 1924, from memory), rounded.
HIGH = {"N2": "49 bar", "H2": "147 bar", "NH3": "108 bar"}


def test_peng_robinson_moves_q_by_the_fugacity_term_and_labels_the_call():
    ideal = assess(NH3, T=("723.15", "K"), partial_pressures=HIGH)
    pr = assess(NH3, T=("723.15", "K"), partial_pressures=HIGH, gas_model="Peng-Robinson")
    assert pr.gas_model == "peng-robinson" and ideal.gas_model == "ideal"
    # the ideal call carries the estimate, the Peng–Robinson call applies the same number
    np.testing.assert_array_equal(pr.fugacity_term, ideal.fugacity_term)
    shift = R * 723.15 * pr.fugacity_term[0]
    assert pr.dG_actual[0] - ideal.dG_actual[0] == pytest.approx(shift, rel=1e-12, abs=1e-9)
    assert pr.fugacity_term[0] < -0.1  # K_φ < 1 at 300 bar: the real gas favours ammonia
    assert "Peng–Robinson gases" in pr.conditions and "Peng–Robinson" not in ideal.conditions
    assert any(n.startswith("Gas model: Peng–Robinson") for n in pr.notes)
    row = pr.to_dict()["rows"][0]
    assert row["fugacity_term_lnQ"] == pytest.approx(pr.fugacity_term[0])
    assert pr.to_dict()["gas_model"] == "peng-robinson"
    # an ideal call's table reads as before the option existed
    assert (
        "gas_model" not in ideal.to_dict() and "fugacity_term_lnQ" not in ideal.to_dict()["rows"][0]
    )


def test_standard_state_is_the_same_under_both_models():
    a = assess(NH3, T="700 K", gas_model="peng-robinson")
    b = assess(NH3, T="700 K")
    assert a.dG_actual is None and a.fugacity_term is None
    np.testing.assert_array_equal(a.dG_call, b.dG_call)


def test_call_at_required_conversion_agrees_with_the_peng_robinson_equilibrium():
    # Two routes: the sign of ΔrG at the composition of the required conversion (thermo) and
    # the Peng–Robinson equilibrium extent (equilibrium wing, its own φ iteration).
    from feasibly.equilibrium import equilibrium_extent

    temps = np.linspace(640.0, 800.0, 33)
    feed = "N2:1, H2:3, Ar:0.2"
    at = {"feed": feed, "key": "N2", "required": "50%", "P": "300 bar"}
    a = assess(NH3, T=(temps, "K"), at_conversion=at, gas_model="peng-robinson")
    x = equilibrium_extent(NH3, (temps, "K"), "300 bar", feed, key="N2", gas_model="pr")
    ideal = equilibrium_extent(NH3, (temps, "K"), "300 bar", feed, key="N2")
    assert a.favourable.tolist() == (x.conversion > 0.5).tolist()
    # the grid reaches where the two models disagree on the requirement
    assert ((x.conversion > 0.5) != (ideal.conversion > 0.5)).any()
    a_range = assess(
        NH3, T_range=("640 K", "800 K"), points=5, at_conversion=at, gas_model="peng-robinson"
    )
    (t,) = a_range.crossover_at_conditions_K
    at_t = equilibrium_extent(NH3, (t, "K"), "300 bar", feed, key="N2", gas_model="pr")
    # Brent's method stops at 1e-6 K; the conversion changes by ~2e-3 per K here
    assert float(at_t.conversion[0]) == pytest.approx(0.5, abs=1e-5)


def test_refusals_name_the_reason():
    with pytest.raises(InvalidInput, match="'gas_model' parameter of assess must be 'ideal' or"):
        assess(NH3, T="700 K", partial_pressures=HIGH, gas_model="van der Waals")
    # a gas of the equation without a partial pressure: the mixture is unknown
    with pytest.raises(InvalidInput, match="NH3 has none"):
        assess(NH3, T="700 K", partial_pressures={"N2": "50 bar", "H2": "150 bar"}, gas_model="pr")
    # a gas without critical constants in the shipped table (chemicals has none for AlCl3 gas)
    with pytest.raises(InvalidInput, match=r"no critical\s+constants"):
        assess(
            "2 AlCl3(g) -> Al2Cl6(g)",
            T="600 K",
            partial_pressures={"AlCl3(g)": "20 bar", "Al2Cl6(g)": "20 bar"},
            gas_model="peng-robinson",
        )
    # steam at 200 bar and 400 K is a liquid to the equation of state (water boils at 2.5 bar
    # there); 20 bar too (two roots, the liquid one of lower G)
    for p_h2o in ("200 bar", "20 bar"):
        pp = {"CO": "1 bar", "H2O": p_h2o, "CO2": "1 bar", "H2": "1 bar"}
        with pytest.raises(InvalidInput, match="puts this mixture in the liquid"):
            assess("CO + H2O -> CO2 + H2", T="400 K", partial_pressures=pp, gas_model="pr")
        # the ideal-gas call still runs, without an estimate to warn with
        assert assess("CO + H2O -> CO2 + H2", T="400 K", partial_pressures=pp).fugacity_term is None
    # at 2 bar of steam the mixture is a gas
    pp = {"CO": "1 bar", "H2O": "2 bar", "CO2": "1 bar", "H2": "1 bar"}
    assert assess("CO + H2O -> CO2 + H2", T="400 K", partial_pressures=pp, gas_model="pr")


def test_monte_carlo_call_carries_the_same_correction():
    kw = {"T": (np.array([650.0, 700.0, 750.0]), "K"), "partial_pressures": HIGH}
    ideal = assess_uncertainty(NH3, samples=4096, seed=5, **kw)
    pr = assess_uncertainty(NH3, samples=4096, seed=5, gas_model="peng-robinson", **kw)
    a = assess(NH3, gas_model="peng-robinson", **kw)
    # same draws; the nominal ΔrG of every trial moves by RT Σ ν ln φ of the kernel's call
    np.testing.assert_array_equal(pr.samples.values, ideal.samples.values)
    np.testing.assert_allclose(pr.model.G0, a.dG_actual, rtol=1e-12)
    np.testing.assert_allclose(pr.model.G0 - ideal.model.G0, R * a.standard.T * a.fugacity_term,
                               rtol=1e-9)  # fmt: skip
    assert np.all(pr.p_feasible >= ideal.p_feasible) and np.any(pr.p_feasible > ideal.p_feasible)
    assert pr.to_dict()["gas_model"] == "peng-robinson" and "gas_model" not in ideal.to_dict()
    assert "Peng–Robinson gases" in pr.conditions


def test_ideal_call_warns_only_where_the_correction_exceeds_the_data_uncertainty():
    from feasibly.uncertainty.inputs import build_inputs
    from feasibly.uncertainty.linear import gum_uncertainty, linear_model, uncertain_species
    from feasibly.uncertainty.sampling import draw_samples

    high = assess(NH3, T="723.15 K", partial_pressures=HIGH)
    text = gas_model_warning(high)
    assert text is not None and text.startswith("Non-ideal gases:")
    inputs = build_inputs(uncertain_species(high.reaction))
    u = gum_uncertainty(
        linear_model(high.reaction, high.standard.T, draw_samples(inputs, 2, seed=0)),
        np.diag([i.u**2 for i in inputs]),
    )[0]
    shift = R * 723.15 * high.fugacity_term[0]
    assert abs(shift) > u  # the condition the warning states
    assert f"{shift / 1000:+.3g} kJ/mol" in text and f"{abs(shift) / u:.2g} times" in text
    # at a few bar the correction is far below the data's uncertainty: no warning
    low = assess(
        NH3, T="723.15 K", partial_pressures={"N2": "1 bar", "H2": "3 bar", "NH3": "1 bar"}
    )
    assert low.fugacity_term is not None and gas_model_warning(low) is None
    # the Peng–Robinson call needs no warning; a standard-state call has nothing to warn about
    assert (
        gas_model_warning(assess(NH3, T="723.15 K", partial_pressures=HIGH, gas_model="pr")) is None
    )
    assert gas_model_warning(assess(NH3, T="723.15 K")) is None


def test_command_line_applies_the_gas_model_to_the_call(capsys):
    base = ["assess", NH3, "--T", "723.15", "K", "--p", "N2=49", "bar", "--p", "H2=147", "bar",
            "--p", "NH3=108", "bar", "--json"]  # fmt: skip
    assert main(base) == 0
    ideal = json.loads(capsys.readouterr().out)
    assert main([*base, "--gas-model", "peng-robinson"]) == 0
    pr = json.loads(capsys.readouterr().out)
    a = assess(NH3, T="723.15 K", partial_pressures=HIGH, gas_model="peng-robinson")
    assert pr["rows"][0]["dG_actual_J_per_mol"] == float(a.dG_actual[0])
    assert pr["gas_model"] == "peng-robinson" and "Peng–Robinson" in pr["call_basis"]["conditions"]
    assert any(n.startswith("Non-ideal gases:") for n in ideal["notes"])
    assert not any(n.startswith("Non-ideal gases:") for n in pr["notes"])
    # the table says which gases ΔrG is for
    assert main([*base[:-1], "--gas-model", "peng-robinson"]) == 0
    assert "Peng–Robinson gas mixture (fugacities φ y P)" in capsys.readouterr().out
    # a refusal exits 2 with the reason, no traceback
    assert main(["assess", NH3, "--T", "700", "K", "--p", "N2=50", "bar",
                 "--gas-model", "peng-robinson"]) == 2  # fmt: skip
    err = capsys.readouterr().err
    assert "H2, NH3 have none" in err and "Traceback" not in err
    # mole fractions that leave part of the gas unknown cannot give the mixture's φ
    some = ["assess", NH3, "--T", "700", "K", "--P", "300", "bar", "--y", "N2=0.2", "--y",
            "H2=0.6", "--y", "NH3=0.1"]  # fmt: skip
    assert main([*some, "--gas-model", "peng-robinson"]) == 2
    assert "must add up to 1" in capsys.readouterr().err
    assert main(some) == 0  # the ideal-gas call does not need the rest of the gas
    capsys.readouterr()
    whole = [*some[:-1], "NH3=0.2", "--gas-model", "peng-robinson", "--json"]
    assert main(whole) == 0
    assert json.loads(capsys.readouterr().out)["gas_model"] == "peng-robinson"


def test_record_carries_the_gas_model_of_the_call_and_verify_recomputes_with_it():
    rec = make_record(NH3, T=("723.15", "K"), partial_pressures=HIGH, samples=4096, seed=2,
                      gas_model="peng-robinson")  # fmt: skip
    assert rec["conditions"]["gas_model"] == "peng-robinson"
    assert "Peng–Robinson gases" in rec["results"]["summary"]["headline"]
    assert verify_record(rec).identical
    # the report says which gases the partial pressures are for
    from feasibly.records import record_html

    assert "Partial pressures (Peng–Robinson gas mixture, fugacities φ y P" in record_html(rec)
    # the same record said to be ideal (and re-sealed) no longer reproduces
    edited = json.loads(json.dumps(rec))
    edited["conditions"]["gas_model"] = "ideal"
    check = verify_record(_seal({k: v for k, v in edited.items() if k != "integrity"}))
    assert not check.identical
    assert any("dG_actual" in d.field or "gas_model" in d.field for d in check.differences)
    # an ideal record carries the warning, and one written before the field (no gas_model)
    # verifies as ideal
    ideal = make_record(NH3, T=("723.15", "K"), partial_pressures=HIGH)
    assert ideal["conditions"]["gas_model"] == "ideal"
    assert any(n.startswith("Non-ideal gases:") for n in ideal["results"]["assessment"]["notes"])
    old = json.loads(json.dumps(ideal))
    del old["conditions"]["gas_model"]
    assert verify_record(_seal({k: v for k, v in old.items() if k != "integrity"})).identical


def test_record_refuses_a_monte_carlo_run_of_another_gas_model():
    from feasibly.errors import RecordError
    from feasibly.records import record_from

    a = assess(NH3, T="723.15 K", partial_pressures=HIGH, gas_model="peng-robinson")
    u = assess_uncertainty(NH3, T="723.15 K", partial_pressures=HIGH, samples=1024, seed=1)
    with pytest.raises(RecordError, match="another gas model"):
        record_from(a, u)


def test_library_face_offers_the_option():
    a = feasibly.assess(NH3, T="723.15 K", partial_pressures=HIGH, gas_model="pr")
    assert a.gas_model == "peng-robinson"


def test_monte_carlo_call_gets_the_same_warning_as_the_nominal_call():
    kw = {"T": (np.array([700.0, 723.15]), "K"), "partial_pressures": HIGH}
    a = assess(NH3, **kw)
    u = assess_uncertainty(NH3, samples=1024, seed=1, **kw)
    assert gas_model_warning(u) == gas_model_warning(a) is not None
    pr = assess_uncertainty(NH3, samples=1024, seed=1, gas_model="pr", **kw)
    assert gas_model_warning(pr) is None
