"""One number parser for the command line and the UI: plain ASCII decimals only.

Python's own ``float`` reads ``1_0`` as 10 (PEP 515, "Underscores in Numeric Literals",
which also applies to ``float()`` of a string) and reads any Unicode decimal digits, so
``float("٣٥") == 35`` (Python documentation, built-in ``float``: the digits may be any
characters of Unicode category Nd). The first test pins that outside behaviour, so that the
refusals below are known to guard against something real.
"""

from __future__ import annotations

import pytest

from planner.errors import InputError
from planner.numbers import NumberError, check_plain_digits, parse_number


def test_python_float_is_generous_pep515_and_unicode_digits():
    assert float("1_0") == 10.0
    assert float("٣٥") == 35.0          # ARABIC-INDIC DIGIT THREE, FIVE
    assert float("３５") == 35.0        # FULLWIDTH DIGIT THREE, FIVE
    assert int("٣") == 3


@pytest.mark.parametrize("text, value", [
    ("38", 38.0), (" 38.5\t", 38.5), ("+5", 5.0), ("-0.5", -0.5), (".5", 0.5), ("5.", 5.0),
    ("1e3", 1000.0), ("1E-3", 0.001), ("0", 0.0), ("-0", 0.0), ("007", 7.0),
])
def test_plain_decimals_are_read(text, value):
    assert parse_number(text) == value


@pytest.mark.parametrize("text, why", [
    ("1_0", "without '_' separators"),
    ("1_000.5", "without '_' separators"),
    ("٣٥", "ARABIC-INDIC DIGIT THREE"),
    ("３５", "FULLWIDTH DIGIT THREE"),
    ("३५", "DEVANAGARI DIGIT THREE"),
    ("١.٥", "ARABIC-INDIC DIGIT ONE"),
    ("0x10", "not a number: '0x10'"),
    ("1.2.3", "not a number: '1.2.3'"),
    ("1,5", "not a number: '1,5'"),
    ("abc", "not a number: 'abc'"),
    ("", "not a number: ''"),
    ("3 5", "not a number: '3 5'"),
])
def test_lookalike_numbers_are_refused_with_one_line(text, why):
    with pytest.raises(NumberError) as info:
        parse_number(text)
    message = info.value.message
    assert why in message and "\n" not in message
    assert message.startswith("not a number: ")


@pytest.mark.parametrize("text", ["nan", "NaN", "-inf", "Infinity", "1e400", "-1e999"])
def test_non_finite_values_are_refused(text):
    with pytest.raises(NumberError, match="must be a finite number"):
        parse_number(text)


def test_decimal_comma_only_when_asked():
    assert parse_number("38,5", decimal_comma=True) == 38.5
    with pytest.raises(NumberError):
        parse_number("1,2,5", decimal_comma=True)
    with pytest.raises(NumberError):
        parse_number("1,5.0", decimal_comma=True)


def test_number_error_is_an_input_error_and_a_value_error():
    """The CLI reports it as a usage error (exit 2); callers catching ValueError still work."""
    with pytest.raises(InputError):
        parse_number("1_0")
    with pytest.raises(ValueError):
        parse_number("1_0")


def test_a_long_text_is_cut_in_the_message():
    with pytest.raises(NumberError) as info:
        parse_number("x" * 500)
    assert len(info.value.message) < 200


@pytest.mark.parametrize("text", ["2", "mild", "", " severe "])
def test_check_plain_digits_accepts_words_and_ascii(text):
    check_plain_digits(text)


@pytest.mark.parametrize("text", ["٣", "1_0", "２"])
def test_check_plain_digits_refuses_lookalikes(text):
    with pytest.raises(NumberError, match="not a number"):
        check_plain_digits(text)
