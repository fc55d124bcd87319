"""Issue #18's "done when": the sample set walked through the CLI JSON (`compare --json`), the report's JSON
(`report`), a saved-and-reopened project (`netstretch project` → `compare --project`, and
`Study.from_project`), the study object and the app's session object (fresh, and saved and reopened) gives,
for each compound, one value per (quantity, basis) everywhere.  The values are compared between independent
routes (different readers of the same inputs: files on disk vs the project zip's bytes vs the app's store;
different commands), so a view that fits with its own settings fails."""

from __future__ import annotations

import io
import json
from contextlib import redirect_stdout

import pytest

from network_models.cli import main
from network_models.study import Study, study_values

SAMPLE = "sample_sets/compounds.toml"
FAST = ["--no-model-spread"]


def _json(argv):
    buf = io.StringIO()
    with redirect_stdout(buf):
        assert main(argv) == 0
    return json.loads(buf.getvalue())


def _one_answer(rows) -> dict:
    """{(compound, quantity, basis): value}, failing when one key has two values."""
    out = {}
    for r in rows:
        k = (r["compound"], r["quantity"], r["basis"])
        assert k not in out or out[k] == r["value"], f"two values for {k}: {out[k]} and {r['value']}"
        out[k] = r["value"]
    return out


@pytest.fixture(scope="module")
def routes(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("consistency")
    zip_path = tmp / "study.zip"
    with redirect_stdout(io.StringIO()):
        assert main(["project", "--manifest", SAMPLE, "-o", str(zip_path), *FAST]) == 0
        assert main(["report", "--manifest", SAMPLE, "-o", str(tmp / "review.html"), *FAST]) == 0
    st = Study.from_manifest(SAMPLE, spread_models=())
    from app.session import Session

    session = Session()
    assert session.data.load_samples() == []
    session.compare.run()
    reopened = Session()
    assert reopened.load_project(session.to_project()) == []
    reopened.compare.run()
    from_cli = Session()  # the project `netstretch project` wrote, opened in the app
    assert from_cli.load_project(zip_path.read_bytes()) == []
    from_cli.compare.run()
    return {
        "app session, CLI project opened": study_values(from_cli.compare.comparison.to_dict()),
        "app session": study_values(session.compare.comparison.to_dict()),
        "app session, saved and reopened": study_values(reopened.compare.comparison.to_dict()),
        "cli compare --manifest": study_values(_json(["compare", "--manifest", SAMPLE, "--json", *FAST])),
        "cli compare --project": study_values(_json(["compare", "--project", str(zip_path), "--json", *FAST])),
        "report json": study_values(json.loads((tmp / "review.json").read_text("utf-8"))),
        "study": st.values(),
        "reopened study": Study.from_project(zip_path.read_bytes()).values(),
    }


def test_every_route_gives_one_value_per_quantity_and_basis(routes):
    answers = {name: _one_answer(rows) for name, rows in routes.items()}
    ref_name, ref = next(iter(answers.items()))
    assert {k[0] for k in ref} == {"QM-S1", "QM-S2", "QM-S3", "QM-S2A", "QM-S2B"}, ref_name
    assert {k[1] for k in ref} >= {"G0", "nu", "nu_swelling"}
    for name, ans in answers.items():
        assert ans.keys() == ref.keys(), f"{name} differs from {ref_name} in which numbers it has"
        bad = {k: (ref[k], ans[k]) for k in ref if ans[k] != pytest.approx(ref[k], rel=1e-12)}
        assert not bad, f"{name} disagrees with {ref_name}: {bad}"


def test_two_numbers_of_one_quantity_carry_different_bases(routes):
    # the QM-S2: the compound table's G₀ (specimen mean) and the crosslink table's (pooled fit) differ,
    # so they must be told apart by their basis, and the basis must name the weighting
    g = {k: v for k, v in _one_answer(routes["study"]).items() if k[0] == "QM-S2" and k[1] == "G0"}
    assert len(g) == 2 and len(set(g.values())) == 2
    bases = sorted(k[2] for k in g)
    assert any("specimen mean" in b for b in bases) and any("pooled fit" in b for b in bases)
    assert all("relative residuals" in b for b in bases)
