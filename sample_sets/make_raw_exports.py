"""Write two INVENTED raw tester exports of one invented compound (Quillmere Elastomer Works, QM-R7):
a German-language and a French-language tensile export, as a tensile tester writes them — a block of
preamble lines with the specimen's geometry, the force column before the extension column, a unit row,
decimal commas, semicolons, and the return branch after the largest stretch.

INVENTED DATA for demonstration only: not measurements.  The curves follow the neo-Hookean model
P = G(λ − λ⁻²) (docs/methods.md §neo-hookean) with G = 0.48 MPa, plus about 0.5 % noise (fixed seed), so a fit of the
neo-Hookean model to either file should give G ≈ 0.48 MPa.

    python sample_sets/make_raw_exports.py        # writes sample_sets/raw_exports/*.csv
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
OUT = HERE / "raw_exports"
SEED = 20261203
G_MPA = 0.48  # the modulus the invented curves are made with (neo-Hookean)


def _curve(rng, gauge_mm, width_mm, thick_mm, lam_max, n):
    """Extension (mm) and force (N) of a neo-Hookean specimen, loading then a short return branch."""
    lam = np.linspace(1.0, lam_max, n)
    force = G_MPA * (lam - lam**-2) * width_mm * thick_mm  # MPa × mm² = N
    force = force * (1 + 0.005 * rng.standard_normal(n)) + 0.002 * rng.standard_normal(n)
    force[0] = 0.0
    back = np.linspace(lam_max, 1.6, 5)[1:]
    back_force = 0.8 * G_MPA * (back - back**-2) * width_mm * thick_mm
    ext = np.concatenate([(lam - 1) * gauge_mm, (back - 1) * gauge_mm])
    return ext, np.concatenate([force, back_force])


def _comma(x, digits):
    return f"{x:.{digits}f}".replace(".", ",")


def german(rng) -> str:
    gauge, width, thick = 20.0, 4.0, 2.0
    ext, force = _curve(rng, gauge, width, thick, 3.4, 36)
    lines = [
        "Prüfbericht Zugversuch",
        "Hinweis;ERFUNDENE DATEN zur Demonstration (Quillmere Elastomer Works, keine Messung)",
        "Mischung;QM-R7",
        "Probe;QM-R7-1",
        "Prüfart;Zugversuch",
        "Prüftemperatur;23;°C",
        f"Messlänge;{_comma(gauge, 1)};mm",
        f"Breite;{_comma(width, 2)};mm",
        f"Dicke;{_comma(thick, 2)};mm",
        "Prüfgeschwindigkeit;500;mm/min",
        "",
        "Kraft;Weg",
        "N;mm",
    ]
    lines += [f"{_comma(f, 4)};{_comma(e, 3)}" for f, e in zip(force, ext, strict=True)]
    return "\r\n".join(lines) + "\r\n"


def french(rng) -> str:
    gauge, width, thick = 25.0, 6.0, 2.1
    ext, force = _curve(rng, gauge, width, thick, 3.0, 30)
    lines = [
        "Rapport d'essai de traction",
        "Remarque;DONNÉES INVENTÉES pour démonstration (Quillmere Elastomer Works, pas une mesure)",
        "Matériau;QM-R7",
        "Éprouvette;QM-R7-F2",
        "Type d'essai;Traction",
        "Température d'essai;23;°C",
        f"Longueur de référence;{_comma(gauge, 1)};mm",
        f"Largeur;{_comma(width, 2)};mm",
        f"Épaisseur;{_comma(thick, 2)};mm",
        "Vitesse d'essai;200;mm/min",
        "",
        "Force (N);Allongement (mm)",
    ]
    lines += [f"{_comma(f, 4)};{_comma(e, 3)}" for f, e in zip(force, ext, strict=True)]
    return "\n".join(lines) + "\n"


def build() -> dict[str, bytes]:
    """File name → bytes (the German file in Windows-1252, as many testers write it; the French in UTF-8)."""
    rng = np.random.default_rng(SEED)
    return {
        "QM-R7_zugversuch_de.csv": german(rng).encode("cp1252"),
        "QM-R7_traction_fr.csv": french(rng).encode("utf-8"),
    }


def main(out: Path = OUT) -> int:
    out.mkdir(parents=True, exist_ok=True)
    for name, data in build().items():
        (out / name).write_bytes(data)
        print(f"wrote {out / name}")
    return 0


if __name__ == "__main__":
    sys.exit(main(Path(sys.argv[1]) if len(sys.argv) > 1 else OUT))
