"""The compiled JSON twins of the package data match their YAML (the fast read path)."""

from __future__ import annotations

import yaml

from planner import datafiles


def test_every_twin_is_current():
    """Each YAML file's twin records its hash and holds the same data; after editing a
    YAML file, run ``python -m planner.datafiles`` to rewrite the twins."""
    status = datafiles.compiled_status()
    assert set(status) == set(datafiles.package_yaml_names())
    stale = {name: state for name, state in status.items() if state != "current"}
    assert not stale, f"stale compiled package data (run python -m planner.datafiles): {stale}"


def _count_yaml_parses(monkeypatch) -> list[int]:
    calls: list[int] = []
    real_load = datafiles._yaml_load

    def counting_load(text):
        calls.append(1)
        return real_load(text)

    monkeypatch.setattr(datafiles, "_yaml_load", counting_load)
    return calls


def test_a_current_twin_is_read_without_yaml(monkeypatch):
    calls = _count_yaml_parses(monkeypatch)
    assert datafiles.load_package_yaml("targets.yaml")["targets"]
    assert calls == []


def test_a_stale_twin_is_never_used(monkeypatch):
    """A twin whose checksum does not match the YAML beside it is ignored: the YAML is read."""
    calls = _count_yaml_parses(monkeypatch)
    monkeypatch.setattr(datafiles, "_digest", lambda text: "0" * 8)
    data = datafiles.load_package_yaml("probes.yaml")
    assert calls == [1]
    text = (datafiles._data_dir() / "probes.yaml").read_text(encoding="utf-8")
    assert data == yaml.safe_load(text)


def test_twin_and_yaml_agree_value_for_value():
    for name in datafiles.package_yaml_names():
        text = (datafiles._data_dir() / name).read_text(encoding="utf-8")
        assert datafiles.load_package_yaml(name) == yaml.safe_load(text), name


def test_each_load_returns_fresh_data():
    first = datafiles.load_package_yaml("vocabulary.yaml")
    first["exam_types"].clear()
    assert datafiles.load_package_yaml("vocabulary.yaml")["exam_types"]
