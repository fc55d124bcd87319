"""The error family and notices: structured fields survive, notices keep their kind, and the same sentence
said of several compounds reads as one line (issue: "eight 'no planar data' lines bury the real warning")."""

from __future__ import annotations

import pickle

from network_models.errors import DataError, NetstretchError, Notice, about, group_notices, merge_notices


def test_error_carries_its_fields_and_is_a_value_error():
    e = DataError("a.csv, line 3: no stress column", file="a.csv", line=3, missing=["gauge_length"])
    assert isinstance(e, NetstretchError) and isinstance(e, ValueError)
    d = e.to_dict()
    assert d["file"] == "a.csv" and d["line"] == 3 and d["missing"] == ["gauge_length"]
    assert str(e) == "a.csv, line 3: no stress column"


def test_notice_is_its_sentence_and_survives_pickling():
    n = Notice("no planar data were fitted", "extrapolated-mode", "planar")
    assert n == "no planar data were fitted" and n.kind == "extrapolated-mode"
    m = pickle.loads(pickle.dumps(n))
    assert (m, m.kind, m.subject) == (n, n.kind, n.subject)


def test_same_sentence_of_several_compounds_is_one_line():
    base = Notice("no planar data were fitted: planar predictions are extrapolations", "extrapolated-mode")
    other = Notice("the fit reached a bound", "at-bound")
    lines = merge_notices([about("A", base), about("B", other), about("C", base), "a plain sentence"])
    assert lines == ["no planar data were fitted: planar predictions are extrapolations (A, C)",
                     "B: the fit reached a bound", "a plain sentence"]


def test_group_by_kind_keeps_order():
    g = group_notices([Notice("x", "k1"), "plain", Notice("y", "k1")])
    assert list(g) == ["k1", "note"] and g["k1"] == ["x", "y"]
