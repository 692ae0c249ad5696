"""Reading numbers that people type: one parser for the command line and the terminal UI.

Python's ``float`` is generous: it reads ``1_0`` as 10 (PEP 515 digit grouping), ``٣٥``
(Arabic-Indic digits) and any other Unicode decimal digits as 35, and ``nan`` or ``inf`` as
numbers. A plan that silently reads a BMI of ``1_0`` as 10 is worse than one that says what
it could not read, so scanplan refuses all of these with one line that says why:

- only the ASCII digits 0-9, one optional sign, one decimal point and an optional exponent
  (``e`` or ``E``) are numbers: ``38``, ``38.5``, ``-0.5``, ``.5``, ``+5``, ``1e3``;
- ``_`` separators and non-ASCII digits are refused, naming the character;
- ``nan``, ``inf`` and values too large for a float (``1e400``) are refused as not finite;
- leading and trailing ASCII spaces and tabs are ignored.

With ``decimal_comma=True`` (the terminal UI's form) one ``,`` is read as the decimal point.
This module imports nothing heavy and no UI, so the command line, the plan-file layer and the
UI can all use it.
"""

from __future__ import annotations

import math
import re
import unicodedata

from planner.errors import InputError

__all__ = ["NumberError", "check_plain_digits", "parse_number"]

_NUMBER = re.compile(r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?", re.ASCII)
_NOT_FINITE = re.compile(r"[+-]?(?:nan|inf|infinity)", re.ASCII | re.IGNORECASE)
_SPACE = " \t"


class NumberError(InputError, ValueError):
    """Text that is not a finite number as scanplan reads numbers (one-line ``message``)."""


def _why(text: str) -> str:
    """Why a stripped text is not a number, for the message ("" when it is just not one)."""
    if "_" in text and _NUMBER.fullmatch(text.replace("_", "")):
        return "write it without '_' separators"
    for char in text:
        if not char.isascii() and unicodedata.category(char) == "Nd":
            return f"use the digits 0-9, not {char!r} ({unicodedata.name(char, 'a non-ASCII digit')})"
    return ""


def parse_number(text: str, *, decimal_comma: bool = False) -> float:
    """Read ``text`` as a finite number.

    Parameters
    ----------
    text : str
        What the user typed.
    decimal_comma : bool
        Accept one ``,`` as the decimal point (``38,5`` is 38.5).

    Returns
    -------
    float

    Raises
    ------
    NumberError
        ``not a number: '1_0' (write it without '_' separators)``, ``must be a finite
        number, got 'nan'`` and the like: one line, quoting what was typed.
    """
    shown = repr(text) if len(text) <= 40 else repr(text[:37] + "...")
    body = text.strip(_SPACE)
    if decimal_comma and body.count(",") == 1 and "." not in body:
        body = body.replace(",", ".")
    if _NOT_FINITE.fullmatch(body):
        raise NumberError(f"must be a finite number, got {shown}")
    if not _NUMBER.fullmatch(body):
        why = _why(body)
        raise NumberError(f"not a number: {shown} ({why})" if why else f"not a number: {shown}")
    value = float(body)
    if not math.isfinite(value):
        raise NumberError(f"must be a finite number, got {shown} (too large)")
    return value


def check_plain_digits(text: str) -> None:
    """Refuse text that ``int`` or ``float`` would read as a number it does not show plainly:
    digits other than 0-9, or ``_`` between digits (``1_0``). For fields that mix words and
    numbers, such as a condition grade (``steatosis:2`` or ``steatosis:mild``).

    Raises
    ------
    NumberError
        ``not a number: '٣' (use the digits 0-9, ...)``.
    """
    body = text.strip(_SPACE)
    shown = repr(body) if len(body) <= 40 else repr(body[:37] + "...")
    if any(not c.isascii() and unicodedata.category(c) == "Nd" for c in body) or \
            re.search(r"[0-9]_|_[0-9]", body):
        raise NumberError(f"not a number: {shown} ({_why(body) or 'write it without _'})")
