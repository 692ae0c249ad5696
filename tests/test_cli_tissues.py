"""``scanplan tissues``: the tissue quick reference (text fits 100 columns; --json objects;
bad flags are one line and exit 2; the command loads neither numpy, the engine nor Textual)."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from planner.cli import main

ROOT = Path(__file__).resolve().parents[1]
FIELDS = ("speed_m_per_s", "density_kg_per_m3", "attenuation_db_per_cm_mhz",
          "attenuation_exponent")


def run(capsys, *argv):
    code = main(["tissues", *argv])
    out, err = capsys.readouterr()
    return code, out, err


def test_text_table_fits_100_columns_and_names_every_tissue(capsys):
    code, out, err = run(capsys)
    assert code == 0 and not err
    assert max(len(line) for line in out.splitlines()) <= 100
    for tid in ("liver", "muscle_across", "cortical_bone", "tm_phantom_05", "tm_phantom_07"):
        assert any(line.startswith(tid + "  ") for line in out.splitlines())
    assert "(also: muscle)" in out and "(also: bone)" in out
    assert "m/s" in out and "kg/m3" in out and "dB/cm/MHz^y" in out
    assert "Diagnostics2023" in out and "from memory" in out and "verified" in out


def test_json_is_a_list_of_objects_with_units_sources_status(capsys):
    code, out, _ = run(capsys, "--json")
    assert code == 0
    rows = json.loads(out)
    assert isinstance(rows, list) and len(rows) >= 27
    liver = next(r for r in rows if r["id"] == "liver")
    assert liver["speed_m_per_s"] == {"value": 1577.0, "unit": "m/s", "source": "PMB2019Liver",
                                      "status": "verified", "note": "1577 +/- 11 m/s"}
    for row in rows:
        assert {"id", "name", "kind", "aliases", "impedance_mrayl", *FIELDS} <= set(row)
        for field in FIELDS:
            assert set(row[field]) == {"value", "unit", "source", "status", "note"}
        assert row["impedance_mrayl"] == pytest.approx(
            row["density_kg_per_m3"]["value"] * row["speed_m_per_s"]["value"] * 1e-6, rel=1e-3)


def test_aliases_select_canonical_rows(capsys):
    code, out, _ = run(capsys, "muscle", "bone", "--json")
    assert code == 0
    rows = json.loads(out)
    assert [r["id"] for r in rows] == ["muscle_across", "cortical_bone"]
    assert rows[0]["aliases"] == ["muscle"]


@pytest.mark.parametrize("argv, words", [(["--bogus"], "unrecognized arguments"),
                                         (["--json=yes"], "--json"),
                                         (["nerve"], "unknown tissue 'nerve'")])
def test_bad_input_is_one_line_exit_2(capsys, argv, words):
    code, out, err = run(capsys, *argv)
    assert code == 2 and not out
    assert len(err.strip().splitlines()) == 1 and words in err


def test_running_it_loads_no_heavy_module():
    code = ("import sys, io, contextlib\nfrom planner.cli import main\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n    main(['tissues', '--json'])\n"
            "print(' '.join(sorted(sys.modules)))")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=60, cwd=ROOT, check=True)
    loaded = proc.stdout.split()
    for heavy in ("numpy", "textual", "planner.engine", "planner.body", "planner.library"):
        assert not [m for m in loaded if m == heavy or m.startswith(heavy + ".")], heavy
