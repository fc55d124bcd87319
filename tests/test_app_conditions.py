"""Test conditions editable per file in the app (issue #21): typed in the data view's per-file settings, written
into the file's curves' metadata, saved in the project file (through its strict reader), shown in the report's
test-conditions table as data, never markup; a bad entry gets a sentence and the typed text stays.

The curves are an affine network P = νRT(λ − λ⁻²) (Treloar 1975, ch. 4), R from scipy.constants (CODATA);
the checks are of the app's own behaviour (what reaches the store, the project file and the report).
"""

from __future__ import annotations

import io
import tomllib
import zipfile
from types import SimpleNamespace

import numpy as np
import pytest
from scipy.constants import R

pytest.importorskip("panel")

T23 = 296.15


def gauss_csv(nu=120.0, head="# temperature: 23 °C\n") -> bytes:
    lam = np.linspace(1.0, 3.0, 21)
    P = nu * R * T23 * (lam - lam**-2) / 1e6
    return (head + "stretch,stress (MPa)\n" + "\n".join(f"{a:.6f},{b:.8f}" for a, b in zip(lam, P, strict=True))
            ).encode()


@pytest.fixture()
def page():
    from app.main import create_app

    a = create_app(load_samples=False)
    a.ns_data._on_upload(SimpleNamespace(new={"K-1_uniaxial.csv": gauss_csv(
        head="# temperature: 23 °C\n# crosshead speed: 200 mm/min\n")}))
    a.ns_data.edit_file.value = "K-1_uniaxial.csv"
    return a


def _report_conditions(store, name):
    from app.compare_state import build_compound
    from network_models.compare import compare
    from network_models.report.recipe_sections import conditions_html

    cmp = compare([build_compound(store, name)], model="neo-hookean", spread_models=())
    return "".join(conditions_html(cmp))


def test_the_data_view_shows_what_the_file_states_and_keeps_typed_conditions(page):
    dv, store = page.ns_data, page.ns_session.store
    w = dv.cond_inputs
    assert w["speed"].placeholder == "200 mm/min"  # read from the file's metadata line
    assert w["temperature"].placeholder == "23.0 °C"
    assert w["die"].placeholder == "not stated"
    rev = store.revision
    w["speed"].value, w["die"].value, w["date"].value = "500", "type 2 <b>dumbbell</b>", "2026-03-04"
    w["temperature"].value = "40"
    dv._apply_conditions()
    assert store.revision > rev  # the report and Compare follow the store's revision
    md = store.get("K-1_uniaxial.csv").curves[0].metadata["conditions"]
    assert md == {"speed": "500 mm/min", "die": "type 2 <b>dumbbell</b>", "date": "2026-03-04",
                  "temperature": "40.0 °C"}
    html = _report_conditions(store, "K-1")
    assert "500 mm/min" in html and "200 mm/min" not in html  # the user's edit wins over the file's line
    assert "40.0 °C" in html and "2026-03-04" in html
    assert "type 2 &lt;b&gt;dumbbell&lt;/b&gt;" in html and "<b>dumbbell" not in html  # data, not markup
    assert "kept" in dv.cond_msg.object


def test_a_negative_speed_gets_a_sentence_and_the_typed_text_stays(page):
    dv, store = page.ns_data, page.ns_session.store
    w = dv.cond_inputs
    w["speed"].value = "500 mm/min"
    dv._apply_conditions()
    w["speed"].value, w["specimen_type"].value = "-5 mm/min", "ring <script>x</script>"
    dv._apply_conditions()
    assert "positive" in dv.cond_msg.object and "crosshead speed" in dv.cond_msg.object
    assert w["speed"].value == "-5 mm/min"  # nothing typed is lost
    cond = store.get("K-1_uniaxial.csv").conditions
    assert cond["speed"] == "500 mm/min"  # the last good value stays in force
    assert cond["specimen_type"] == "ring <script>x</script>"  # the good field beside it is kept
    w["temperature"].value = "-300"
    dv._apply_conditions()
    assert "absolute zero" in dv.cond_msg.object and "<script>" not in dv.cond_msg.object
    page.ns_session.units.stretch = "elongation"  # a redraw of the same file keeps the typed text and sentence
    page.ns_session.units.stretch = "stretch"
    assert w["temperature"].value == "-300" and "absolute zero" in dv.cond_msg.object


def test_conditions_survive_a_re_read_and_a_project_round_trip(page):
    from app.session import Session
    from network_models.project import read_project

    dv, s = page.ns_data, page.ns_session
    dv.cond_inputs["die"].value, dv.cond_inputs["cycle"].value = "C", "3rd loading"
    dv._apply_conditions()
    s.store.set_options("K-1_uniaxial.csv", mode="uniaxial")  # a re-read keeps the user's conditions
    assert s.store.get("K-1_uniaxial.csv").curves[0].metadata["conditions"]["die"] == "C"
    blob = s.to_project()
    with zipfile.ZipFile(io.BytesIO(blob)) as z:
        doc = tomllib.loads(z.read("project.toml").decode())
    assert doc["input"][0]["conditions"] == {"die": "C", "cycle": "3rd loading"}
    assert read_project(blob).notices == []  # the strict reader knows the field
    b = Session()
    assert b.load_project(blob) == []
    f = b.store.get("K-1_uniaxial.csv")
    assert f.conditions == {"die": "C", "cycle": "3rd loading"}
    assert f.curves[0].metadata["conditions"]["cycle"] == "3rd loading"
    assert "3rd loading" in _report_conditions(b.store, "K-1")


def test_the_project_reader_drops_unknown_conditions_and_refuses_wrong_types():
    from network_models.project import Project, ProjectFileError, ProjectInput, read_project, write_project

    inp = ProjectInput(name="a.csv", data=gauss_csv(), compound="A", conditions={"die": "C", "colour": "red"})
    p = read_project(write_project(Project(inputs=[inp])))
    assert p.inputs[0].conditions == {"die": "C"}
    assert any("colour" in n for n in p.notices)
    bad = ProjectInput(name="a.csv", data=gauss_csv(), compound="A", conditions={"die": 3})
    with pytest.raises(ProjectFileError, match="conditions die must be text"):
        read_project(write_project(Project(inputs=[bad])))


def test_the_command_line_reads_the_apps_conditions_from_a_project(page):
    from network_models.report.recipe_sections import conditions_html
    from network_models.study import Study

    dv, s = page.ns_data, page.ns_session
    dv.cond_inputs["die"].value = "cutter <7>"
    dv._apply_conditions()
    st = Study.from_project(s.to_project())  # what `compare --project` and `report --project` open
    c = next(c for c in st.compounds if c.name == "K-1")
    assert c.curves[0].metadata["conditions"]["die"] == "cutter <7>"
    from network_models.compare import compare

    html = "".join(conditions_html(compare([c], model="neo-hookean", spread_models=())))
    assert "cutter &lt;7&gt;" in html
