"""``netstretch batch``: a folder tree of mixed files, one row per curve, failures listed, resume, and the same
results with local processes and on a Dask cluster.

The fitted numbers are checked against an independent closed form: curves made from the neo-Hookean
uniaxial law P = G(λ − λ⁻²) (Treloar, The Physics of Rubber Elasticity, 3rd ed., 1975, ch. 4) are fitted
with the neo-Hookean model and must give back G; the headline strand density is ν = G/(RT) with R from
scipy.constants (affine network, ibid. ch. 4).  The curves here are made in the test, not sample data.
"""

from __future__ import annotations

import csv
import math
import shutil
from pathlib import Path

import numpy as np
import pytest
import scipy.constants as sc

from network_models.batch import collect_files, read_results, run_batch
from network_models.cli import main

SAMPLES = Path(__file__).resolve().parent.parent / "sample_sets"
T = 296.15  # K, written in each file's metadata


def _neo_file(path: Path, G: float, specimens=("A",), noise=0.0, seed=0):
    rng = np.random.default_rng(seed)
    lam = np.linspace(1.0, 3.0, 25)
    lines = ["# mode: uniaxial", "# temperature: 23 °C", f"# compound: C-{path.stem}", "specimen,stretch,stress (MPa)"]
    for sp in specimens:
        P = G * (lam - lam ** -2) * (1 + noise * rng.standard_normal(lam.size))  # Treloar's neo-Hookean law
        lines += [f"{sp},{float(x)!r},{float(y) / 1e6!r}" for x, y in zip(lam, P, strict=True)]
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


@pytest.fixture
def tree(tmp_path):
    root = tmp_path / "archive"
    Gs = {}
    for i in range(6):
        G = 0.3e6 + 0.1e6 * i
        sub = "2024" if i % 2 else "2025/batch-7"
        _neo_file(root / sub / f"run{i}.csv", G, specimens=("A", "B") if i == 0 else ("A",))
        Gs[f"{sub}/run{i}.csv"] = G
    shutil.copy(SAMPLES / "QM-S2B_uniaxial.xlsx", root / "2025" / "filled.xlsx")  # xlsx read too
    (root / "2024" / "broken.csv").write_bytes(b"\x00\x01binary")
    (root / "2024" / "notes.csv").write_text("just,words\nno,numbers\n", encoding="utf-8")
    (root / "README.md").write_text("not a lab file", encoding="utf-8")
    return root, Gs


def _by_curve(rows):
    return {(r["file"], r["curve"]): r for r in rows}


def test_folder_tree_rows_failures_and_values(tree, tmp_path):
    root, Gs = tree
    out = tmp_path / "res.csv"
    s = run_batch([root], "neo-hookean", out, progress=False)
    rows = read_results(out)
    assert s.failed_files == 2 and s.read == 7
    files = {r["file"] for r in rows}
    assert files == set(Gs) | {"2025/filled.xlsx"}
    header = next(csv.reader(out.open(encoding="utf-8")))
    for col in ("file", "specimen", "compound", "mode", "model", "G", "G0", "nu", "nu_basis", "rms", "r2",
                "warnings"):
        assert col in header
    R = sc.R  # CODATA molar gas constant
    for rel, G in Gs.items():
        for r in (x for x in rows if x["file"] == rel):
            assert float(r["G"]) == pytest.approx(G, rel=1e-6)  # exact data: the fit returns the generating G
            assert float(r["nu"]) == pytest.approx(G / (R * T), rel=1e-6)  # affine ν = G/(RT)
            assert r["mode"] == "uniaxial" and r["model"] == "neo-hookean" and r["compound"] == f"C-{Path(rel).stem}"
    assert len([r for r in rows if r["file"] == "2025/batch-7/run0.csv"]) == 2  # one row per specimen curve
    fails = list(csv.DictReader(out.with_name("res.failures.csv").open(encoding="utf-8")))
    assert {f["file"] for f in fails} == {"2024/broken.csv", "2024/notes.csv"}
    assert all(f["problem"].startswith(Path(f["file"]).name) for f in fails)  # the reader's own sentence


def test_resume_skips_done_files(tree, tmp_path):
    root, _ = tree
    out = tmp_path / "res.csv"
    later = root / "2024" / "run1.csv"
    hold = tmp_path / "held.csv"
    later.rename(hold)  # the first run sees only part of the archive (as if interrupted)
    first = run_batch([root], "neo-hookean", out, progress=False)
    before = _by_curve(read_results(out))
    hold.rename(later)
    second = run_batch([root], "neo-hookean", out, progress=False)
    after = _by_curve(read_results(out))
    assert second.skipped == first.read and second.read == 1  # only the new file was fitted
    assert set(after) == set(before) | {("2024/run1.csv", "C-run1 A")}
    assert all(after[k] == v for k, v in before.items())  # earlier rows untouched
    fresh = tmp_path / "fresh.csv"
    run_batch([root], "neo-hookean", fresh, progress=False)
    assert _by_curve(read_results(fresh)) == after  # resumed == done in one go


def test_other_model_on_same_output_is_refused(tree, tmp_path):
    root, _ = tree
    out = tmp_path / "res.csv"
    run_batch([root / "2024"], "neo-hookean", out, progress=False)
    with pytest.raises(ValueError, match="neo-hookean"):
        run_batch([root / "2024"], "eight-chain", out, progress=False)


def test_two_local_processes_give_identical_output(tree, tmp_path):
    root, _ = tree
    a, b = tmp_path / "one.csv", tmp_path / "two.csv"
    run_batch([root], "eight-chain", a, jobs=1, progress=False)
    run_batch([root], "eight-chain", b, jobs=2, progress=False)
    assert a.read_bytes() == b.read_bytes()


def test_parquet_matches_csv(tree, tmp_path):
    pytest.importorskip("pyarrow", reason="parquet output needs pyarrow (the dev/cluster extra)")
    root, _ = tree
    run_batch([root], "neo-hookean", tmp_path / "r.csv", progress=False)
    run_batch([root], "neo-hookean", tmp_path / "r.parquet", progress=False)
    c, p = read_results(tmp_path / "r.csv"), read_results(tmp_path / "r.parquet")
    assert len(c) == len(p)
    for x, y in zip(c, p, strict=True):
        assert x["file"] == y["file"] and float(x["G"]) == y["G"]
    assert not (tmp_path / "r.journal.csv").exists()


@pytest.mark.slow
def test_dask_cluster_gives_identical_output(tree, tmp_path):
    distributed = pytest.importorskip("distributed", reason="the [cluster] extra is not installed")
    root, _ = tree
    local = tmp_path / "local.csv"
    run_batch([root], "eight-chain", local, progress=False)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as lc, \
            distributed.Client(lc) as client:
        run_batch([root], "eight-chain", tmp_path / "dask.csv", scheduler=lc.scheduler_address, progress=False)
        run_batch([root], "eight-chain", tmp_path / "dask2.csv", scheduler=client, progress=False)
    assert (tmp_path / "dask.csv").read_bytes() == local.read_bytes()
    assert (tmp_path / "dask2.csv").read_bytes() == local.read_bytes()


def test_cli(tree, tmp_path, capsys):
    root, _ = tree
    out = tmp_path / "cli.csv"
    assert main(["batch", str(root), "--model", "neo-hookean", "-o", str(out), "--jobs", "2"]) == 0
    cap = capsys.readouterr()
    assert "could not be read" in cap.out and "netstretch batch" in cap.err  # summary; progress bar on stderr
    assert main(["batch", str(tmp_path / "nowhere"), "--model", "neo-hookean", "-o", str(out)]) == 2
    assert "no such file or folder" in capsys.readouterr().err
    assert main(["batch", str(root), "--model", "neo-hookean", "-o", str(tmp_path / "x.txt")]) == 2


def test_no_nan_in_output(tree, tmp_path):
    root, _ = tree
    out = tmp_path / "res.csv"
    run_batch([root], "extended-tube", out, progress=False)
    text = out.read_text(encoding="utf-8").lower()
    assert "nan" not in text and "inf," not in text
    for r in read_results(out):
        assert r["error"] or all(r[k] is None or math.isfinite(float(r[k])) for k in ("G0", "rms"))


def test_collect_files_names_relative_to_given_folder(tree):
    root, _ = tree
    names = [rel for rel, _ in collect_files([root / "2025"])]
    assert names == sorted(names) and "batch-7/run0.csv" in names and "filled.xlsx" in names


def test_to_frame(tree, tmp_path):
    from network_models.batch import to_frame

    root, Gs = tree
    out = tmp_path / "res.csv"
    run_batch([root], "neo-hookean", out, progress=False)
    df = to_frame(out)
    assert len(df) == len(read_results(out)) and df["G"].dtype.kind == "f"
    row = df[df["file"] == "2024/run1.csv"].iloc[0]
    assert row["G"] == pytest.approx(Gs["2024/run1.csv"], rel=1e-6)  # Treloar's neo-Hookean G, as generated


@pytest.fixture
def hundred(tmp_path):
    """A hundred files over a year/batch folder tree, mixed as an archive is: the sample set's CSV, TXT (psi),
    XLSX and raw instrument exports (French and German headers), curves made here, and a few that cannot be
    read."""
    root = tmp_path / "qc"
    kinds = sorted(p for p in SAMPLES.glob("*_*.*") if p.suffix in (".csv", ".txt", ".xlsx")
                   and "force_temperature" not in p.name) + sorted((SAMPLES / "raw_exports").glob("*.csv"))
    n = 0
    while n < 92:
        src = kinds[n % len(kinds)]
        dest = root / f"20{24 + n % 3}" / f"batch-{n % 7}" / f"{n:03d}-{src.name}"
        dest.parent.mkdir(parents=True, exist_ok=True)
        shutil.copy(src, dest)
        n += 1
    for i in range(4):
        _neo_file(root / "made" / f"neo{i}.csv", 0.4e6 + 0.05e6 * i, noise=0.01, seed=i)
    for i in range(4):
        (root / "made" / f"broken{i}.csv").write_bytes(b"\x00\xff" * (i + 1))
    assert sum(1 for p in root.rglob("*") if p.is_file()) == 100
    return root


@pytest.mark.slow
def test_hundred_mixed_files_same_results_in_one_two_processes_and_dask(hundred, tmp_path):
    """The archive run of the issue: every readable file fitted, the unreadable ones listed with a sentence,
    and byte-identical results from 1 process, 2 processes and a Dask cluster."""
    one, two = tmp_path / "one.csv", tmp_path / "two.csv"
    run_batch([hundred], "eight-chain", one, progress=False)
    run_batch([hundred], "eight-chain", two, jobs=2, progress=False)
    assert two.read_bytes() == one.read_bytes()
    assert (tmp_path / "two.failures.csv").read_bytes() == (tmp_path / "one.failures.csv").read_bytes()
    rows = read_results(one)
    files = {r["file"] for r in rows}
    swelling = sorted(str(p.relative_to(hundred)) for p in hundred.rglob("*swelling_toluene.csv"))
    assert swelling  # a swelling table in the archive: not a stress–stretch curve, listed as unreadable
    assert len(files) == 96 - len(swelling)
    assert any(f.endswith(".xlsx") for f in files) and any(f.endswith(".txt") for f in files)
    assert any("zugversuch" in f for f in files) and any("traction" in f for f in files)
    failed = (tmp_path / "one.failures.csv").read_text("utf-8")
    assert all(f"made/broken{i}.csv" in failed for i in range(4))
    assert all(name in failed for name in swelling) and "no stretch, strain or extension column" in failed
    distributed = pytest.importorskip("distributed", reason="the [cluster] extra is not installed")
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as lc:
        run_batch([hundred], "eight-chain", tmp_path / "dask.csv", scheduler=lc.scheduler_address, progress=False)
    assert (tmp_path / "dask.csv").read_bytes() == one.read_bytes()
    assert (tmp_path / "dask.failures.csv").read_bytes() == (tmp_path / "one.failures.csv").read_bytes()
