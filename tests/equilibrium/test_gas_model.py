"""The gas model option: Peng–Robinson fugacity coefficients in the extent, the Gibbs minimum,
the conversion criterion, the notes, the command line and the record.

References: the two equilibrium routes must agree with each other on a single-reaction system
(the Gibbs minimum with φ and the extent with φ solve the same equations by different means);
the law of mass action with fugacities, K° = Π (φ_i x_i P/P°)^ν_i, is checked directly on the
answer; measured high-pressure equilibria are in tests/reference/test_nonideal_equilibria.py.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

import feasibly
from feasibly.cli import main
from feasibly.equilibrium import conversion_assessment, equilibrate, equilibrium_extent
from feasibly.errors import InvalidInput
from feasibly.thermo import critical_constants, ln_fugacity_coefficients

LIB = feasibly.default_library()
R = 8.314462618  # J/(mol K), CODATA 2018 (from memory of the SI definition)
NH3 = "N2 + 3 H2 -> 2 NH3"


def test_extent_with_fugacity_meets_the_law_of_mass_action():
    """K° = Π (φ_i x_i P/P°)^ν_i at the Peng–Robinson answer, with φ evaluated independently."""
    T = np.array([600.0, 700.0, 800.0])
    x = equilibrium_extent(NH3, (T, "K"), "200 bar", "N2:1, H2:3, Ar:0.2", key="N2",
                           gas_model="peng-robinson")  # fmt: skip
    n = x.amounts
    ntot = n.sum(axis=1) + 0.2
    y = np.column_stack([n, np.full(T.size, 0.2)]) / ntot[:, None]
    crit = critical_constants([LIB["N2(g)"], LIB["H2(g)"], LIB["NH3(g)"], LIB["Ar(g)"]])
    ln_phi = ln_fugacity_coefficients(T, np.full(T.size, 200e5), y, crit)
    nu = np.array([-1.0, -3.0, 2.0])
    lhs = np.sum(nu * (ln_phi[:, :3] + np.log(y[:, :3] * 200.0)), axis=1)
    ln_k = -feasibly.standard_properties(feasibly.Reaction.parse(NH3), T).dG / (R * T)
    # 1e-10: the φ iteration settles to 1e-12 and the root to 1e-12 in ln units
    np.testing.assert_allclose(lhs, ln_k, atol=1e-10)
    np.testing.assert_allclose(x.fugacity_term, np.sum(nu * ln_phi[:, :3], axis=1), atol=1e-10)


def test_gibbs_minimum_and_extent_agree_with_fugacity():
    T = (np.array([650.0, 750.0]), "K")
    ext = equilibrium_extent(NH3, T, "300 bar", "N2:1, H2:3", key="N2", gas_model="peng-robinson")
    eq = equilibrate("N2(g) H2(g) NH3(g)", T, "300 bar", "N2:1, H2:3", gas_model="peng-robinson")
    # 1e-8 relative: both routes converge far tighter (φ to 1e-10, amounts to 1e-12)
    np.testing.assert_allclose(eq.amount("NH3(g)"), ext.amounts[:, 2], rtol=1e-8)
    ideal = equilibrate("N2(g) H2(g) NH3(g)", T, "300 bar", "N2:1, H2:3")
    assert np.all(eq.amount("NH3(g)") > ideal.amount("NH3(g)"))
    assert eq.to_dict()["gas_model"] == "peng-robinson"


def test_notes_warn_where_fugacity_exceeds_the_data_uncertainty():
    T = ([600.0, 700.0], "K")
    high = conversion_assessment(NH3, T, "N2:1, H2:3", "N2", "20%", "200 bar")
    assert high["gas_model"] == "ideal"
    assert any("Non-ideal gases" in n and "--gas-model peng-robinson" in n for n in high["notes"])
    row = high["rows"][0]
    assert abs(row["fugacity_term_lnK"]) > row["u_lnK"]
    low = conversion_assessment(NH3, T, "N2:1, H2:3", "N2", "1%", "1 bar")
    assert low["notes"] == []
    assert all(abs(r["fugacity_term_lnK"]) < r["u_lnK"] for r in low["rows"])
    used = conversion_assessment(NH3, T, "N2:1, H2:3", "N2", "20%", "200 bar", gas_model="PR")
    assert used["gas_model"] == "peng-robinson" and "Gas model: Peng–Robinson" in used["notes"][0]
    assert [r["conversion"] for r in used["rows"]] == [
        r["conversion_peng_robinson"] for r in used["rows"]
    ]


def test_gas_model_refusals():
    with pytest.raises(InvalidInput, match="'gas_model' parameter of equilibrium_extent"):
        equilibrium_extent(NH3, "700 K", "1 bar", "N2:1, H2:3", gas_model="van der Waals")
    # a gas without critical constants in the table is refused by name
    missing = next(
        sp
        for sp in LIB
        if sp.phase == "g" and sp.cas and sp.cas not in feasibly.thermo.fugacity._table()
    )
    with pytest.raises(InvalidInput, match=missing.id.replace("(", r"\(").replace(")", r"\)")):
        critical_constants([missing], "equilibrium_extent")
    with pytest.raises(InvalidInput, match="samples"):
        equilibrate("N2 H2 NH3", "700 K", "100 bar", "N2:1, H2:3", samples=100,
                    gas_model="peng-robinson")  # fmt: skip


def test_record_carries_the_gas_model_and_verify_reproduces_it(tmp_path, capsys):
    path = tmp_path / "nh3.json"
    args = ["assess", NH3, "--T", "700", "K", "--feed", "N2:1, H2:3", "--key", "N2",
            "--require-conversion", "30%", "--P", "200", "bar", "--gas-model", "peng-robinson",
            "--record", str(path)]  # fmt: skip
    assert main(args) == 0
    out = capsys.readouterr().out
    assert "Peng–Robinson" in out and "Note: Gas model" in out
    doc = json.loads(path.read_text("utf-8"))
    assert doc["conversion"]["gas_model"] == "peng-robinson"
    assert doc["results"]["conversion"]["gas_model"] == "peng-robinson"
    assert main(["verify", str(path)]) == 0
    assert "identical" in capsys.readouterr().out
    # the ideal-gas call at the same conditions warns, and its record says ideal
    ideal = tmp_path / "ideal.json"
    assert main([*args[:-4], "--record", str(ideal)]) == 0
    assert "Note: Non-ideal gases" in capsys.readouterr().out
    assert json.loads(ideal.read_text("utf-8"))["conversion"]["gas_model"] == "ideal"


def test_call_draws_with_fugacity_meet_the_mass_action_threshold():
    """With the call's own sample set and Peng–Robinson gases, P(conversion ≥ 30 %) is the
    fraction of the call's draws whose ln K° reaches Σ ν ln(φ x P/P°) at 30 % conversion.

    Independent route: the threshold comes from the law of mass action at the composition of
    the required conversion with φ evaluated directly; the extent solver is not used for it.
    Conversion grows with ln K° here (one reaction, fixed T and P), so the two events coincide.
    """
    from feasibly import assess_uncertainty
    from feasibly.uncertainty import linear_model

    u = assess_uncertainty(NH3, T_range=("700 K", "820 K"), points=7, samples=4096, seed=5)
    T = np.asarray(u.T)
    P = 200e5
    x_req = 0.3
    n = np.array([1.0 - x_req, 3.0 * (1.0 - x_req), 2.0 * x_req])  # N2, H2, NH3 from N2:1, H2:3
    y = np.tile(n / n.sum(), (T.size, 1))
    crit = critical_constants([LIB["N2(g)"], LIB["H2(g)"], LIB["NH3(g)"]])
    nu = np.array([-1.0, -3.0, 2.0])
    ln_phi = ln_fugacity_coefficients(T, np.full(T.size, P), y, crit)
    need_pr = np.sum(nu * (ln_phi + np.log(y * P / 1e5)), axis=1)
    need_ideal = np.sum(nu * np.log(y * P / 1e5), axis=1)
    ln_k = -linear_model(u.reaction, T, u.samples).values("G", u.samples) / (R * T[:, None])
    for gas_model, need in (("peng-robinson", need_pr), ("ideal", need_ideal)):
        c = conversion_assessment(u.reaction, (T, "K"), "N2:1, H2:3", "N2", "30%", "200 bar",
                                  sample_set=u.samples, gas_model=gas_model)  # fmt: skip
        assert c["shared_draws"] and c["trials"] == u.trials and c["gas_model"] == gas_model
        p = np.array([r["P_meets_required"] for r in c["rows"]])
        # one trial: a draw whose ln K° sits within the solver's rounding of the threshold
        np.testing.assert_allclose(p, np.mean(ln_k >= need[:, None], axis=1), atol=1.0 / u.trials)
    # the fugacity coefficients move the threshold by more than the spread of the draws here
    p_pr = np.mean(ln_k >= need_pr[:, None], axis=1)
    p_id = np.mean(ln_k >= need_ideal[:, None], axis=1)
    assert np.max(np.abs(p_pr - p_id)) > 0.1


def test_sampled_record_with_fugacity_uses_the_calls_draws_and_verifies(tmp_path, capsys):
    path = tmp_path / "nh3-sampled.json"
    args = ["assess", NH3, "--T", "760", "K", "--feed", "N2:1, H2:3", "--key", "N2",
            "--require-conversion", "30%", "--P", "200", "bar", "--gas-model", "peng-robinson",
            "--samples", "2048", "--seed", "11", "--record", str(path)]  # fmt: skip
    assert main(args) == 0
    capsys.readouterr()
    doc = json.loads(path.read_text("utf-8"))
    assert doc["conversion"]["gas_model"] == "peng-robinson"
    assert doc["conversion"]["shared_draws"] is True
    assert doc["conversion"]["samples"] == 2048 and doc["conversion"]["seed"] == 11
    res = doc["results"]["conversion"]
    assert res["gas_model"] == "peng-robinson" and res["trials"] == 2048
    assert main(["verify", str(path)]) == 0
    assert "identical" in capsys.readouterr().out
