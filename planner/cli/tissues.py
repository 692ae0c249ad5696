"""``scanplan tissues``: the tissue table as a quick reference (text or JSON).

Every value is shown with its unit, its source key (a key of the bibliography,
``planner/data/references``) and its status (verified, from memory, common practice,
derived). Aliases (``muscle``, ``bone``) are listed beside the tissue they name. The
impedance is derived here as density x speed.

Imports of the tissue table happen inside :func:`run_tissues`, so that building the parser
loads neither YAML nor the physics package.
"""

from __future__ import annotations

import argparse
from typing import Any

from planner.cli.common import emit_json

__all__ = ["FIELDS", "register", "run_tissues", "tissue_rows", "format_table"]

FIELDS: tuple[tuple[str, str, str], ...] = (
    ("speed_m_per_s", "speed", "m/s"),
    ("density_kg_per_m3", "density", "kg/m3"),
    ("attenuation_db_per_cm_mhz", "attenuation", "dB/cm/MHz^y"),
    ("attenuation_exponent", "exponent y", "-"),
)
"""(table field, label shown, unit) for each sourced value, in display order."""

WIDTH = 100
"""The text table fits this many columns."""


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``tissues`` command to ``sub``."""
    t = sub.add_parser("tissues", help="list the tissue table with units, sources and status",
                       description="The tissue table: speed of sound, density, attenuation "
                       "coefficient and its frequency exponent, each with its unit, source key "
                       "and status; aliases are accepted as tissue names.")
    t.add_argument("tissue", nargs="*", help="only these tissues (ids or aliases)")
    t.add_argument("--json", action="store_true", help="a JSON list of objects")
    t.set_defaults(func=run_tissues)


def _number(value: float) -> str:
    return f"{value:g}"


def tissue_rows(ids: list[str] | None = None) -> list[dict[str, Any]]:
    """One JSON-ready object per tissue: id, name, kind, aliases, impedance_mrayl
    (derived) and, per field of :data:`FIELDS`, ``{value, unit, source, status, note}``."""
    from planner.physics.tissues import load_tissues, resolve_tissue_id, tissue_aliases

    table = load_tissues()
    aliases = tissue_aliases()
    wanted = list(table) if not ids else list(dict.fromkeys(resolve_tissue_id(i) for i in ids))
    rows = []
    for tid in wanted:
        tissue = table[tid]
        row: dict[str, Any] = {
            "id": tid, "name": tissue.name, "kind": tissue.kind,
            "aliases": sorted(a for a, target in aliases.items() if target == tid),
            "impedance_mrayl": float(f"{tissue.impedance_mrayl:.6g}"),
        }
        for field, _label, unit in FIELDS:
            sourced = tissue.provenance[field]
            row[field] = {"value": float(sourced.value), "unit": unit, "source": sourced.source,
                          "status": sourced.status, "note": sourced.note}
        rows.append(row)
    return rows


def _clip(text: str, width: int) -> str:
    return text if len(text) <= width else text[:width - 3] + "..."


def format_table(rows: list[dict[str, Any]]) -> str:
    """The text quick reference: a block per tissue, every line at most :data:`WIDTH` wide."""
    lines = ["Tissue acoustic properties (alpha(f) = alpha0 * f^y, one way; "
             "Z = density x speed, derived)", ""]
    counts: dict[str, int] = {}
    for row in rows:
        alias = f"  (also: {', '.join(row['aliases'])})" if row["aliases"] else ""
        head = f"{row['id']}  {row['name']}{alias}"
        lines.append(_clip(head, WIDTH))
        for field, label, unit in FIELDS:
            cell = row[field]
            counts[cell["status"]] = counts.get(cell["status"], 0) + 1
            value = f"{_number(cell['value'])} {unit}" if unit != "-" else _number(cell["value"])
            status = cell["status"].replace("_", " ")
            lines.append(_clip(f"  {label:<12} {value:<20} {cell['source']:<26} {status}", WIDTH))
        impedance = f"{row['impedance_mrayl']:.3f} MRayl"
        lines.append(f"  {'impedance':<12} {impedance:<20} {'density x speed':<26} derived")
        lines.append("")
    total = sum(counts.values())
    if total:
        parts = ", ".join(f"{n} {s.replace('_', ' ')}" for s, n in sorted(counts.items()))
        share = 100.0 * counts.get("verified", 0) / total
        noun = "tissue" if len(rows) == 1 else "tissues"
        lines.append(f"{len(rows)} {noun}, {total} sourced values ({share:.0f} % verified):")
        lines.append(_clip(f"  {parts}.", WIDTH))
    lines.append("Full citations: planner/data/references/. Published values scatter "
                 "(species, temperature, method).")
    return "\n".join(lines)


def run_tissues(args: argparse.Namespace) -> int:
    """Print the tissue table (``--json``: a list of objects, see :func:`tissue_rows`)."""
    rows = tissue_rows(list(args.tissue))
    if args.json:
        emit_json(rows)
    else:
        print(format_table(rows))
    return 0
