"""`netstretch thermo`: a force–temperature record in, the energetic fraction out."""

from __future__ import annotations

import json

import numpy as np
import pytest

from network_models.cli import main


def _write_record(path, T_c, F, stretch):
    lines = [f"# stretch: {stretch}", "temperature (°C),force (N)"]
    lines += [f"{t:.2f},{f:.6f}" for t, f in zip(T_c, F, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def test_ideal_record_is_entropic(tmp_path, capsys):
    # F ∝ T at fixed length (Meyer & Ferri 1935): the line passes through 0 K and f_e/f = 0.
    T_c = np.linspace(20, 80, 13)
    F = 0.03 * (T_c + 273.15)
    f = tmp_path / "ideal.csv"
    _write_record(f, T_c, F, 2.0)
    assert main(["thermo", str(f), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert abs(out["energetic_fraction_constant_volume"]["value"]) < 1e-4
    assert abs(out["force_line"]["intercept_at_0K_N"]) < 1e-3


def test_energetic_record(tmp_path, capsys):
    # F = a + bT: f_e/f = a/(a + bT) at the mean temperature [derived from −T d ln(F/T)/dT]
    T_c = np.linspace(45, 55, 11)
    T = T_c + 273.15
    a, b = 3.0, 0.02
    f = tmp_path / "energetic.csv"
    _write_record(f, T_c, a + b * T, 2.0)
    assert main(["thermo", str(f), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["energetic_fraction_constant_volume"]["value"] == pytest.approx(a / (a + b * T.mean()), rel=2e-3)


def test_bad_record_is_one_sentence(tmp_path, capsys):
    f = tmp_path / "bad.csv"
    f.write_text("temperature (°C),force (N)\n20,1\n30,1.1\n40,1.2\n", encoding="utf-8")
    assert main(["thermo", str(f)]) == 2
    err = capsys.readouterr().err
    assert "stretch" in err and "Traceback" not in err
