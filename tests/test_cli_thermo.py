"""`netstretch thermo`: a force–temperature record in, the energetic fraction out, with the right labels."""

from __future__ import annotations

import json

import numpy as np
import pytest

from network_models.cli import main


def _write_record(path, T_c, F, stretch):
    lines = [f"# stretch: {stretch}", "temperature (°C),force (N)"]
    lines += [f"{t:.4f},{f:.9f}" for t, f in zip(T_c, F, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def _ideal_network_with_expansion(T, lam, beta, T_ref, c=0.01):
    # ideal network at constant pressure, written here (Flory, Principles of Polymer Chemistry ch. XI
    # [memory]): f ∝ T·(⟨r²⟩_i/⟨r²⟩₀)·(A_i/V)·(λ − λ⁻²), V ∝ s, L_i ∝ s^⅓, A_i ∝ s^⅔, ⟨r²⟩_i ∝ L_i², λ = L/L_i
    s = 1 + beta * (T - T_ref)
    li = np.cbrt(s)
    lam_T = lam / li
    return c * T * li**2 * li**2 / s * (lam_T - lam_T**-2)


def test_labels_constant_pressure_vs_constant_volume(tmp_path, capsys):
    # Issue 10 item 4: the value measured at constant pressure is the uncorrected one; the Flory–Ciferri–Hoeve
    # corrected value is the constant-volume energetic fraction, ≈ 0 for an ideal network
    # (docs/methods.md §thermoelastic).
    beta, lam = 6.6e-4, 2.0
    T_c = np.linspace(20, 30, 11)
    T = T_c + 273.15
    f = tmp_path / "ideal.csv"
    _write_record(f, T_c, _ideal_network_with_expansion(T, lam, beta, T.mean()), lam)
    assert main(["thermo", str(f), "--expansion", str(beta), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    at_p, at_v = out["energetic_fraction_constant_pressure"], out["energetic_fraction_constant_volume"]
    expected_p = beta * T.mean() / (lam**3 - 1)  # βT/(λ³ − 1) [derived, docs/methods.md §thermoelastic]
    assert at_p["value"] == pytest.approx(expected_p, rel=5e-3)
    assert abs(at_v["value"]) < 5e-3 * expected_p
    assert "constant-volume" in at_v["method"] and "constant pressure" in at_p["method"]
    assert main(["thermo", str(f), "--expansion", str(beta)]) == 0
    text = capsys.readouterr().out
    assert "at constant pressure (as measured, uncorrected)" in text
    assert "energetic fraction at constant volume" in text


def test_without_expansion_only_the_constant_pressure_value(tmp_path, capsys):
    # F = a + bT: −T d ln(F/T)/dT = a/(a + bT) at the mean temperature [derived from the definition];
    # without β there is no constant-volume value to show.
    T_c = np.linspace(45, 55, 11)
    T = T_c + 273.15
    a, b = 3.0, 0.02
    f = tmp_path / "energetic.csv"
    _write_record(f, T_c, a + b * T, 2.0)
    assert main(["thermo", str(f), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["energetic_fraction_constant_pressure"]["value"] == pytest.approx(a / (a + b * T.mean()), rel=2e-3)
    assert out["energetic_fraction_constant_volume"] is None


def test_small_stretch_gets_a_notice(tmp_path, capsys):
    # λ³ − 1 < 0.5: the correction dominates (issue 10 item 4) — said in the output
    T_c = np.linspace(20, 30, 6)
    f = tmp_path / "small.csv"
    _write_record(f, T_c, _ideal_network_with_expansion(T_c + 273.15, 1.1, 6.6e-4, 298.15), 1.1)
    assert main(["thermo", str(f), "--polymer", "NR"]) == 0
    assert "dominates" in capsys.readouterr().out


def test_bad_record_is_one_sentence(tmp_path, capsys):
    f = tmp_path / "bad.csv"
    f.write_text("temperature (°C),force (N)\n20,1\n30,1.1\n40,1.2\n", encoding="utf-8")
    assert main(["thermo", str(f)]) == 2
    err = capsys.readouterr().err
    assert "stretch" in err and "Traceback" not in err
