"""The one number formatter (network_models.formatting.number) used by the app's tables and the report."""

from __future__ import annotations

import math
from decimal import Decimal

import pytest
from hypothesis import given
from hypothesis import strategies as st

from network_models.formatting import number


def _significant(text: str) -> int:
    # significant digits of a decimal string (Decimal keeps trailing zeros: Decimal('0.6900') has 4)
    return len(Decimal(text).as_tuple().digits)


@given(st.floats(min_value=-1e12, max_value=1e12, allow_nan=False, allow_infinity=False).filter(lambda x: x != 0),
       st.integers(min_value=2, max_value=6))
def test_digits_and_rounding(x, digits):
    text = number(x, digits)
    # rounding to n significant digits errs by at most half a unit in the last place (common practice)
    assert abs(float(text) - x) <= 0.5 * 10 ** (math.floor(math.log10(abs(float(text)))) - digits + 1) * (1 + 1e-9)
    if "." in text or "e" in text or len(text.lstrip("-")) <= digits:
        assert _significant(text) == digits
    else:  # a large whole number: the digits beyond the n-th are placeholder zeros (1235000)
        assert set(text.lstrip("-")[digits:]) == {"0"}
    plain = 1e-4 <= abs(float(text)) < 1e7
    assert ("e" in text) is (not plain)


def test_examples():
    assert number(0.69) == "0.6900"  # the zeros say four digits are meant
    assert number(9.9996) == "10.00"  # rounds up a decade, still four digits
    assert number(2.5e-7) == "2.500e-07"
    assert number(1234567.0) == "1235000"  # no e+06 in a table a compounder reads
    assert number(None) == number(float("nan")) == number(float("inf")) == "—"
    assert number(0.0) == "0"
    assert number(1.2, 4, trim=True) == "1.2"


def test_app_tables_and_the_report_print_the_same_string():
    pytest.importorskip("param")
    from app import tables
    from network_models.report import fmt

    for x in (0.6914e0, 141.18, 417.72314, 3.3e-5, 2.0e8, float("nan")):
        assert tables.sig(x, 4) == fmt(x, 4) == number(x, 4)
