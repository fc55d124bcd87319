"""Make the bundled sample set: INVENTED data for demonstration, never measurements.

The scenario: "Quillmere Elastomer Works" (an invented maker) compares five invented natural-rubber
compounds: three sulfur cure doses (QM-S1 low, QM-S2 mid, QM-S3 high), one carbon-black-filled variant
of the mid dose (QM-S2B) and one small recipe change of the mid dose (QM-S2A, accelerator 0.6 → 0.7 phr)
whose effect lies inside the specimen-to-specimen scatter.  Every compound has three to five specimens;
each specimen's stress carries its own factor (about 4 % scatter — cross-section measurement and cure
gradients between dumbbells, invented), so a comparison must judge scatter, not fit error.

The curves are generated from the **extended-tube** model (with each
compound's parameters from ``network_models.Network``, pinned), i.e. from a model other than the ones users
usually fit (eight-chain, affine, phantom, Mooney–Rivlin), then given realistic faults: ~1 % noise and a
small force offset, slack at the start of one file, an unloading branch in another, repeated points.

Run from the repository root:  ``.venv/bin/python sample_sets/make_samples.py [out_dir]``
(default out_dir: this folder).  The output is fixed by the seed; tests/test_samples.py regenerates it
into a temporary folder and compares it with the committed files.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
from scipy.optimize import brentq

from network_models import get_model
from network_models.constants import LAB_TEMPERATURE, ZERO_CELSIUS
from network_models.thermo import force_at_fixed_length

SEED = 20261202
HERE = Path(__file__).resolve().parent
BANNER = ("INVENTED DATA for demonstration only. Quillmere Elastomer Works is an invented maker; "
          "these are not measurements")
GENERATOR = get_model("extended-tube")
T_TEST = LAB_TEMPERATURE  # 23 °C, the usual laboratory temperature [common practice]

#: The invented compounds: recipe facts for the manifest and the extended-tube parameters behind the data.
#: Gc, Ge and delta are what ``Network(polymer="NR", nu=..., T=296.15, filler_fraction=phi)`` gave when the
#: set was made (4 significant digits), pinned here so that edits to the polymer table do not silently
#: change the demo data.  For the filled compound delta is widened 1.5× (0.07679 → 0.1152): filler
#: amplifies the strain the rubber phase sees, so it locks earlier (a generator choice for invented data).
COMPOUNDS = {
    "QM-S1": dict(nu=95.0, sulfur_phr=1.0, filler_phr=0.0, phi=0.0, title="NR gum, low sulfur dose",
                  Gc=233.9e3, Ge=347.8e3, delta=0.06308),
    "QM-S2": dict(nu=140.0, sulfur_phr=2.0, filler_phr=0.0, phi=0.0, title="NR gum, mid sulfur dose",
                  Gc=344.7e3, Ge=347.8e3, delta=0.07679),
    "QM-S3": dict(nu=195.0, sulfur_phr=3.0, filler_phr=0.0, phi=0.0, title="NR gum, high sulfur dose",
                  Gc=480.2e3, Ge=347.8e3, delta=0.09095),
    "QM-S2B": dict(nu=140.0, sulfur_phr=2.0, filler_phr=30.0, phi=0.13,
                   title="NR, mid sulfur dose, 30 phr carbon black", Gc=538.9e3, Ge=543.8e3, delta=0.1152),
    # the small recipe change: 5 % more crosslink modulus, i.e. about +2.5 % in G₀ — inside the ~4 % scatter
    "QM-S2A": dict(nu=147.0, sulfur_phr=2.0, filler_phr=0.0, phi=0.0, accelerator_phr=0.7,
                   title="NR gum, mid sulfur dose, accelerator 0.7 phr", Gc=361.9e3, Ge=347.8e3, delta=0.07868),
}
#: The invented recipes in phr (``[compound.recipe]`` in the manifest; ingredient names of
#: network_models/ingredients.toml).  They agree with how :func:`swelling` makes the masses: the generator
#: counts about 6 phr of non-rubber in every re-dried specimen; here that is 5 phr zinc oxide (insoluble,
#: stays in the gel) with the curatives, while the 2 phr stearic acid is extracted — so the Ellis–Welding
#: correction reads the generating strand density back (within the ~2 % scatter the generator adds).
def _recipe(sulfur, cbs=0.6, black=0.0):
    r = {"NR": 100.0}
    if black:
        r["N330"] = black
    return r | {"ZnO": 5.0, "stearic-acid": 2.0, "sulfur": sulfur, "CBS": cbs}


RECIPES = {
    "QM-S1": _recipe(1.0), "QM-S2": _recipe(2.0), "QM-S3": _recipe(3.0),
    "QM-S2B": _recipe(2.0, black=30.0), "QM-S2A": _recipe(2.0, cbs=0.7),
}
#: each specimen's stress factor (invented scatter, sd about 4 %), per compound, in file order
SPECIMEN_FACTORS = {
    "QM-S1": (0.97, 1.02, 0.95, 1.04, 1.01),
    "QM-S2": (1.03, 0.96, 1.01, 0.99),
    "QM-S3": (1.00, 0.96, 1.04, 1.02),
    "QM-S2B": (1.00, 0.95, 1.04),
    "QM-S2A": (1.03, 0.97, 1.05, 1.01, 0.98),
}
BETA = 0.2  # extended-tube exponent, the model's typical value


def generator_params(key, scale=1.0):
    """Extended-tube parameters for one specimen; ``scale`` varies its crosslink density (Gc ∝ ν, δ ∝ √ν)."""
    c = COMPOUNDS[key]
    return {"Gc": c["Gc"] * scale, "Ge": c["Ge"], "delta": c["delta"] * np.sqrt(scale), "beta": BETA}


def nominal(key, mode, lam, scale=1.0, specimen=1.0):
    """Nominal stress of compound ``key``; ``scale`` changes its crosslink density, ``specimen`` is the
    specimen's stress factor (its scatter)."""
    return specimen * GENERATOR.nominal_stress(mode, lam, generator_params(key, scale))


def noisy(rng, stress, rel=0.01, offset=3e3):
    """~1 % multiplicative noise plus a small absolute scatter (Pa) and a constant load-cell offset."""
    zero = rng.normal(0.0, 0.3 * offset)
    return stress * (1.0 + rng.normal(0.0, rel, stress.size)) + rng.normal(0.0, offset, stress.size) + zero


def header(lines: list[str]) -> str:
    return "".join(f"# {ln}\n" for ln in [BANNER, *lines])


def fmt(x, nd):
    return f"{x:.{nd}f}"


# ---------------------------------------------------------------------------------------------------

#: the tensile test conditions written into the uniaxial dumbbell files (invented; the report shows them)
TEST_CONDITIONS = ("specimen type: dumbbell (invented)", "die: type 2 (invented)", "crosshead speed: 500 mm/min",
                   "test date: 2026-01-12 (invented)")


def uniaxial_s1(rng) -> str:
    """Stretch and stress in MPa, three specimens in one file with a specimen column."""
    out = [header([
        "compound: QM-S1", "mode: uniaxial", "temperature: 23 °C", "cycle: 1st loading, virgin specimens",
        *TEST_CONDITIONS,
    ]), "specimen,stretch,stress (MPa)\n"]
    for k, factor in enumerate(SPECIMEN_FACTORS["QM-S1"], start=1):
        lam = np.linspace(1.0, 7.5, 60)
        s = noisy(rng, nominal("QM-S1", "uniaxial", lam, specimen=factor))
        for a, b in zip(lam, s, strict=True):
            out.append(f"S1-{k},{fmt(a, 4)},{fmt(b / 1e6, 5)}\n")
    return "".join(out)


def uniaxial_s2(rng) -> str:
    """Force in N against extension in mm with geometry in metadata, repeated column pairs, slack at the start."""
    gauge, width, thick = 20.0, 4.0, 2.0  # mm
    cols, n = [], 64
    for factor in SPECIMEN_FACTORS["QM-S2"]:
        lam = np.linspace(1.0, 7.0, n - 6)
        stress = noisy(rng, nominal("QM-S2", "uniaxial", lam, specimen=factor))
        force = stress * (width * thick * 1e-6)
        # slack: the crosshead travels ~1.2 mm before the specimen is taut; the force hovers around zero
        slack_ext = np.linspace(-1.2, -0.2, 6)
        ext = np.concatenate([slack_ext, (lam - 1.0) * gauge]) + 1.2
        f = np.concatenate([rng.normal(0.0, 0.01, 6) - 0.01, force])
        cols.append((ext, f))
    out = [header([
        "compound: QM-S2", "mode: uniaxial", f"gauge length: {gauge:g} mm", f"width: {width:g} mm",
        f"thickness: {thick:g} mm", "temperature: 23 °C", "cycle: 1st loading, virgin specimens",
        "note: crosshead zeroed before the specimens were taut (slack at the start)",
    ]), ",".join(f"Extension S2-{k} (mm),Force S2-{k} (N)" for k in range(1, len(cols) + 1)) + "\n"]
    for i in range(n):
        out.append(",".join(f"{fmt(cols[c][0][i], 3)},{fmt(cols[c][1][i], 4)}" for c in range(len(cols))) + "\n")
    return "".join(out)


def uniaxial_s3(rng) -> str:
    """psi and % strain, semicolons and decimal commas, with an unloading branch and repeated points."""
    out = [header([
        "compound: QM-S3", "mode: uniaxial", "temperature: 23 °C",
        "cycle: 1st loading and unloading, virgin specimens", "exported with decimal commas (invented lab)",
    ]), "Specimen;Strain (%);Stress [psi]\n"]
    pa_per_psi = 6894.757293168361  # only to invent the file; readers convert with pint
    for k, factor in enumerate(SPECIMEN_FACTORS["QM-S3"], start=1):
        lam_up = np.linspace(1.0, 6.5, 52)
        lam = lam_up
        if k == 1:  # unloading branch: the return path lies below the loading path (hysteresis)
            lam_down = np.linspace(6.5, 1.2, 20)[1:]
            lam = np.concatenate([lam_up, lam_down])
        s = noisy(rng, nominal("QM-S3", "uniaxial", lam, specimen=factor))
        if k == 1:
            s[lam_up.size:] *= 0.8
        rows = list(zip((lam - 1.0) * 100.0, s / pa_per_psi, strict=True))
        if k == 2:  # the logger wrote a few points twice
            for j in (10, 11, 30):
                rows.insert(j, rows[j])
        for e, p in rows:
            out.append(f"S3-{k};{fmt(e, 2).replace('.', ',')};{fmt(p, 2).replace('.', ',')}\n")
    return "".join(out)


def uniaxial_s2a(k: int):
    """One file per specimen (the specimen named in a metadata line), stretch and MPa."""
    def make(rng) -> str:
        factor = SPECIMEN_FACTORS["QM-S2A"][k - 1]
        out = [header([
            "compound: QM-S2A", f"specimen: A-{k}", "mode: uniaxial", "temperature: 23 °C",
            "cycle: 1st loading, virgin specimen", *TEST_CONDITIONS,
        ]), "stretch,stress (MPa)\n"]
        lam = np.linspace(1.0, 7.0, 56)
        s = noisy(rng, nominal("QM-S2A", "uniaxial", lam, specimen=factor))
        out += [f"{fmt(a, 4)},{fmt(b / 1e6, 5)}\n" for a, b in zip(lam, s, strict=True)]
        return "".join(out)
    return make


def planar_s2(rng) -> str:
    out = [header(["compound: QM-S2", "mode: planar", "temperature: 23 °C",
                   "test piece: wide strip, 10:1 width to height (invented)"]), "specimen,stretch,stress (MPa)\n"]
    for k, scale in enumerate((1.0, 1.02), start=1):
        lam = np.linspace(1.0, 4.5, 40)
        s = noisy(rng, nominal("QM-S2", "planar", lam, scale))
        out += [f"P2-{k},{fmt(a, 4)},{fmt(b / 1e6, 5)}\n" for a, b in zip(lam, s, strict=True)]
    return "".join(out)


def equibiaxial_s2(rng) -> str:
    """True (Cauchy) stress in N/mm², the way a bubble-inflation rig reports it."""
    out = [header(["compound: QM-S2", "mode: equibiaxial", "temperature: 23 °C",
                   "method: bubble inflation, stress at the pole (invented)"]),
           "specimen,stretch,true stress (N/mm²)\n"]
    lam = np.linspace(1.0, 3.5, 36)
    s = noisy(rng, nominal("QM-S2", "equibiaxial", lam, 1.0)) * lam  # nominal → true: σ = λP
    out += [f"E2-1,{fmt(a, 4)},{fmt(b / 1e6, 5)}\n" for a, b in zip(lam, s, strict=True)]
    return "".join(out)


def planar_s2b(rng) -> str:
    out = [header(["compound: QM-S2B", "mode: pure shear", "temperature: 23 °C",
                   "cycle: 3rd loading after 200 % pre-stretch"]), "specimen,strain (%),stress (MPa)\n"]
    lam = np.linspace(1.0, 3.2, 34)
    s = noisy(rng, nominal("QM-S2B", "planar", lam, 1.0))
    out += [f"PB-1,{fmt((a - 1) * 100, 2)},{fmt(b / 1e6, 5)}\n" for a, b in zip(lam, s, strict=True)]
    return "".join(out)


def uniaxial_s2b_rows(rng) -> tuple[list[list], list[list]]:
    """Rows for the .xlsx: metadata rows, header row, unit row, then strain % / stress N/mm² pairs."""
    meta = [[f"# {BANNER}"], ["# compound: QM-S2B"], ["# mode:", "uniaxial"], ["# temperature:", "23 °C"],
            ["# cycle: 3rd loading after 200 % pre-stretch"]]
    factors = SPECIMEN_FACTORS["QM-S2B"]
    table = [[h for k in range(1, len(factors) + 1) for h in (f"Strain B-{k}", f"Stress B-{k}")],
             ["%", "N/mm²"] * len(factors)]
    cols = []
    for factor in factors:
        lam = np.linspace(1.0, 5.5, 46)
        s = noisy(rng, nominal("QM-S2B", "uniaxial", lam, specimen=factor))
        cols.append((np.round((lam - 1) * 100, 2), np.round(s / 1e6, 5)))
    for i in range(cols[0][0].size):
        table.append([float(v) for col in cols for v in (col[0][i], col[1][i])])
    return meta, table


def write_xlsx(path: Path, meta, table):
    import datetime

    import openpyxl

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "QM-S2B uniaxial"
    for r in meta + table:
        ws.append(r)
    fixed = datetime.datetime(2026, 1, 1)
    wb.properties.created = fixed
    wb.properties.modified = fixed
    wb.properties.creator = "netstretch make_samples.py (invented data)"
    wb.save(path)


# ---------------------------------------------------------------------------------------------------

def flory_rehner_phi(nu, chi=0.39, V1=106.85e-6, f=4):
    """Swollen polymer volume fraction φ for strand density ν (mol/m³), affine Flory–Rehner
    (docs/methods.md §flory-rehner)."""
    def g(phi):
        return -(np.log(1 - phi) + phi + chi * phi * phi) - V1 * nu * (phi ** (1 / 3) - 2 * phi / f)
    return brentq(g, 1e-4, 0.95)


def swelling(rng) -> str:
    """Toluene, 72 h at 23 °C: masses generated from each compound's ν (affine Flory–Rehner, χ = 0.39)."""
    rho_p, rho_s = 920.0, 867.0  # kg/m³: NR (polymers.toml), toluene (from memory)
    out = [header(["solvent: toluene, 72 h at 23 °C, blotted and weighed, then dried to constant mass",
                   "dry mass: specimen before swelling; extracted mass: after drying out the solvent",
                   "generated with affine Flory–Rehner, f = 4, chi = 0.39, V1 = 106.85 cm³/mol"]),
           "compound,specimen,dry mass (g),swollen mass (g),extracted mass (g),solvent,temperature (°C)\n"]
    for key, c in COMPOUNDS.items():
        rubber_share = 100.0 / (100.0 + c["filler_phr"] + 6.0)  # 6 phr of curatives etc., invented
        for k in (1, 2):
            dry = rng.uniform(0.18, 0.26)
            extracted = dry * (1 - rng.uniform(0.03, 0.05))
            phi = flory_rehner_phi(c["nu"] * rng.normal(1.0, 0.02))
            v_rubber = extracted * rubber_share / rho_p
            solvent = v_rubber * (1 - phi) / phi * rho_s
            out.append(f"{key},{key}-w{k},{dry:.4f},{extracted + solvent:.4f},{extracted:.4f},toluene,23\n")
    return "".join(out)


def force_temperature(rng) -> str:
    """QM-S2 clamped at λ = 2.0, heated from 20 to 80 °C; force from the Gaussian network with expansion."""
    c = COMPOUNDS["QM-S2"]
    area = 4e-3 * 2e-3
    T = np.arange(20.0, 81.0, 5.0) + ZERO_CELSIUS
    F = force_at_fixed_length(T, 2.0, c["Gc"] + c["Ge"], T_TEST, area, expansion=6.6e-4)
    F = F * (1 + rng.normal(0, 0.004, T.size))
    out = [header(["compound: QM-S2", "stretch: 2.0", "width: 4 mm", "thickness: 2 mm",
                   "note: clamped at stretch 2.0 at 23 °C, relaxed 2 h, then heated in 5 °C steps (invented)"]),
           "temperature (°C),force (N)\n"]
    out += [f"{t - ZERO_CELSIUS:.1f},{f:.4f}\n" for t, f in zip(T, F, strict=True)]
    return "".join(out)


MANIFEST_FILES = {
    "QM-S1": [("QM-S1_uniaxial.csv", "uniaxial", "stretch and MPa, five specimens (specimen column)")],
    "QM-S2": [("QM-S2_uniaxial_force.csv", "uniaxial", "force in N and extension in mm, geometry in metadata, "
               "four specimens as column pairs, slack at the start"),
              ("QM-S2_planar.csv", "planar", "stretch and MPa, two specimens"),
              ("QM-S2_equibiaxial.csv", "equibiaxial", "true stress in N/mm² (bubble inflation)")],
    "QM-S3": [("QM-S3_uniaxial_psi.txt", "uniaxial", "psi and % strain, semicolons, decimal commas; four "
               "specimens; S3-1 has an unloading branch, S3-2 repeated points")],
    "QM-S2B": [("QM-S2B_uniaxial.xlsx", "uniaxial", "workbook: header row plus unit row, % strain and N/mm², "
                "three specimens as column pairs, 3rd loading after 200 % pre-stretch"),
               ("QM-S2B_planar.csv", "planar", "% strain and MPa, 3rd loading after 200 % pre-stretch")],
    "QM-S2A": [(f"QM-S2A_uniaxial_A{k}.csv", "uniaxial", f"one file per specimen (specimen A-{k} named in a "
                "metadata line), stretch and MPa") for k in range(1, 6)],
}
NOTES = {
    "QM-S1": "softest of the cure series; longest strands",
    "QM-S2": "the baseline: the plant's current cure dose (invented)",
    "QM-S3": "stiffest gum; shortest strands, lowest locking stretch",
    "QM-S2B": "QM-S2 with 30 phr of a reinforcing carbon black; pre-cycled, so the Mullins-softened curve",
    "QM-S2A": "QM-S2 with 0.1 phr more accelerator: a change smaller than the specimen scatter (invented)",
}


def manifest() -> str:
    """compounds.toml: the compound list the app, the comparison and the report read."""
    def q(text):
        return '"' + str(text).replace("\\", "\\\\").replace('"', '\\"') + '"'

    generator = (f"make_samples.py, seed {SEED}: extended-tube model (parameters from network_models.Network, pinned), "
                 "~1 % noise plus a small offset, a stress factor per specimen (~4 % scatter)")
    out = [
        f"# {BANNER}\n",
        "# Written by make_samples.py; format described in README.md in this folder.\n\n",
        "[scenario]\n",
        f"title = {q('Quillmere Elastomer Works: cure-dose and filler study (invented for demonstration)')}\n",
        f"note = {q(BANNER)}\n",
        "invented = true\n",
        "polymer = \"NR\"\n",
        "baseline = \"QM-S2\"\n",
        f"test_temperature_C = {T_TEST - ZERO_CELSIUS:.1f}\n",
        f"generator = {q(generator)}\n",
        "purpose = \"Choose the cure dose; check whether the accelerator change and the filler matter\"\n\n",
    ]
    for key, c in COMPOUNDS.items():
        p = generator_params(key)
        cure = f"{c['sulfur_phr']:.1f} phr sulfur, 10 min at 160 °C (invented)"
        out += [
            "[[compound]]\n",
            f"key = {q(key)}\n",
            f"title = {q(c['title'])}\n",
            "polymer = \"NR\"\n",
            f"sulfur_phr = {c['sulfur_phr']:.1f}\n",
            f"accelerator_phr = {c.get('accelerator_phr', 0.6):.1f}\n",
            f"filler = {q('carbon black (reinforcing grade)' if c['filler_phr'] else 'none')}\n",
            f"filler_phr = {c['filler_phr']:.1f}\n",
            f"filler_volume_fraction = {c['phi']:.2f}\n",
            f"cure = {q(cure)}\n",
            f"notes = {q(NOTES[key])}\n",
            "files = [\n",
        ]
        for path, mode, note in MANIFEST_FILES[key]:
            out.append(f"    {{ path = {q(path)}, mode = {q(mode)}, note = {q(note)} }},\n")
        out += [
            "]\n",
            "# the recipe in phr (invented); it wins over filler_volume_fraction, filler_phr and sulfur_phr above\n",
            "[compound.recipe]\n",
            *(f"{q(name)} = {phr:.1f}\n" for name, phr in RECIPES[key].items()),
            "# the values the invented curves were generated from (for demos of how well a fit recovers them)\n",
            "[compound.generator]\n",
            f"model = {q(GENERATOR.name)}\n",
            f"strand_density_mol_m3 = {c['nu']:.1f}\n",
            f"Gc_MPa = {p['Gc'] / 1e6:.5f}\n",
            f"Ge_MPa = {p['Ge'] / 1e6:.5f}\n",
            f"delta = {p['delta']:.5f}\n",
            f"beta = {p['beta']:.3f}\n\n",
        ]
    out += [
        "[swelling]\n",
        "path = \"swelling_toluene.csv\"\n",
        "solvent = \"toluene\"\n",
        "chi = 0.39\n",
        f"note = {q('generated with affine Flory–Rehner, f = 4, chi = 0.39, V1 = 106.85 cm³/mol')}\n\n",
        "[[force_temperature]]\n",
        "path = \"QM-S2_force_temperature.csv\"\n",
        "compound = \"QM-S2\"\n",
    ]
    return "".join(out)


TEXT_FILES = {
    "QM-S1_uniaxial.csv": uniaxial_s1,
    "QM-S2_uniaxial_force.csv": uniaxial_s2,
    "QM-S3_uniaxial_psi.txt": uniaxial_s3,
    "QM-S2_planar.csv": planar_s2,
    "QM-S2_equibiaxial.csv": equibiaxial_s2,
    "QM-S2B_planar.csv": planar_s2b,
    "swelling_toluene.csv": swelling,
    "QM-S2_force_temperature.csv": force_temperature,
    **{f"QM-S2A_uniaxial_A{k}.csv": uniaxial_s2a(k) for k in range(1, 6)},
}
XLSX = "QM-S2B_uniaxial.xlsx"


def generate(out_dir: Path) -> dict[str, object]:
    """Write every sample file into ``out_dir``; return {file name: text, or (meta, table) for the xlsx}."""
    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(SEED)
    made: dict[str, object] = {}
    for name, func in TEXT_FILES.items():
        text = func(rng)
        (out_dir / name).write_text(text, encoding="utf-8", newline="\n")
        made[name] = text
    meta, table = uniaxial_s2b_rows(rng)
    write_xlsx(out_dir / XLSX, meta, table)
    made[XLSX] = (meta, table)
    text = manifest()
    (out_dir / "compounds.toml").write_text(text, encoding="utf-8", newline="\n")
    made["compounds.toml"] = text
    return made


# ----- a QC history: production batches of one compound over months (for `netstretch library trend`) ------------
QC_FOLDER = "qc_history"
QC_SEED = SEED + 23  # its own stream: the cure-study files above stay byte for byte as they were
QC_COMPOUND = "QM-M7"  # an invented anti-vibration mount compound, mid sulfur dose (the QM-S2 network)
#: (batch, test date, crosslink-modulus factor of the batch): the plant's ordinary drift of about ±2 %, and one
#: invented dosing fault — batch B13 got 25 % too much curative, which the control chart should flag
QC_BATCHES = (
    ("B01", "2026-02-03", 1.00), ("B02", "2026-02-17", 0.98), ("B03", "2026-03-03", 1.01),
    ("B04", "2026-03-24", 1.02), ("B05", "2026-04-07", 0.99), ("B06", "2026-04-28", 1.00),
    ("B07", "2026-05-12", 0.97), ("B08", "2026-06-02", 1.01), ("B09", "2026-06-23", 1.03),
    ("B10", "2026-07-14", 0.99), ("B11", "2026-08-04", 1.00), ("B12", "2026-08-25", 1.02),
    ("B13", "2026-09-15", 1.25), ("B14", "2026-10-06", 1.00), ("B15", "2026-10-27", 0.98),
    ("B16", "2026-11-17", 1.01),
)


def qc_batch(rng, batch: str, date: str, scale: float) -> str:
    """Three dumbbells of one production batch: stretch and MPa with a specimen column (~3 % specimen scatter)."""
    key = f"{QC_COMPOUND}-{batch}"
    out = [header([f"compound: {key}", "mode: uniaxial", "temperature: 23 °C", f"date: {date}",
                   "test piece: dumbbell, 500 mm/min, production QC (invented)"]), "specimen,stretch,stress (MPa)\n"]
    for k in range(1, 4):
        factor = 1.0 + rng.normal(0.0, 0.03)
        lam = np.linspace(1.0, 4.0, 31)
        st = noisy(rng, nominal("QM-S2", "uniaxial", lam, scale=scale, specimen=factor))
        for a, b in zip(lam, st, strict=True):
            out.append(f"{batch}-{k},{fmt(a, 4)},{fmt(b / 1e6, 5)}\n")
    return "".join(out)


def qc_manifest() -> str:
    out = [f"# {BANNER}\n", "# Written by make_samples.py: production QC of one invented compound, batch by batch.\n\n",
           f'title = "Quillmere Elastomer Works: {QC_COMPOUND} mount compound, production QC (invented)"\n',
           'purpose = "Is every production batch of the mount compound in control? (invented demonstration data)"\n',
           'polymer = "NR"\n']
    for batch, date, _scale in QC_BATCHES:
        out.append(f'\n[[compound]]\nname = "{QC_COMPOUND}-{batch}"\nfiles = ["{QC_COMPOUND}-{batch}.csv"]\n'
                   f'tested = "{date}"\nbatch = "{batch}"\nnotes = "production batch {batch} (invented)"\n')
    return "".join(out)


def generate_qc_history(out_dir: Path) -> dict[str, str]:
    """Write the QC history (one CSV per batch and its manifest ``qc_history.toml``) into ``out_dir/qc_history``."""
    folder = Path(out_dir) / QC_FOLDER
    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(QC_SEED)
    made = {f"{QC_COMPOUND}-{b}.csv": qc_batch(rng, b, d, s) for b, d, s in QC_BATCHES}
    made["qc_history.toml"] = qc_manifest()
    for name, text in made.items():
        (folder / name).write_text(text, encoding="utf-8", newline="\n")
    return made


if __name__ == "__main__":
    target = Path(sys.argv[1]) if len(sys.argv) > 1 else HERE
    for name in generate(target):
        print(f"wrote {target / name}")
    for name in generate_qc_history(target):
        print(f"wrote {target / QC_FOLDER / name}")
