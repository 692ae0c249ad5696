"""Load and check department protocol files, reporting every problem at once.

:func:`load_protocol` reads a protocol safely (:func:`planner.yamlio.load_user_yaml`),
checks it against the model of :mod:`planner.protocol.schema` (as a strict pydantic model,
:func:`planner.files.dataclass_model.model_for`) and then against the
world outside the file: target and window ids of the target library, probe ids of
the department probe inventory, bibliography keys of every source, unique view and
measurement ids, consistent threshold bands, the time budget and local Doppler rules.
All problems are gathered as ``file:line:col: key.path: message`` and raised
together in one :class:`planner.errors.DataError`.
"""

from __future__ import annotations

import difflib
import math
import os
import re
from pathlib import Path
from typing import Any

from planner.errors import DataError
from planner.files.problems import describe
from planner.protocol.schema import ID_PATTERN, REFERENCE_KEY_PATTERN, SCHEMA_VERSION, Protocol
from planner.yamlio import ProblemCollector, load_user_yaml

__all__ = ["load_protocol", "check_files", "read_probe_ids"]


def read_probe_ids(path: str | os.PathLike[str] | None) -> tuple[tuple[str, ...], list[str]]:
    """Read the probe ids of a probe inventory file (``None``: the default inventory).

    Returns
    -------
    ids : tuple of str
        The probe ids, in file order (empty when the inventory is not usable).
    problems : list of str
        Every problem of the inventory file (empty when the ids can be trusted).
    """
    from planner.library.probes import load_inventory

    try:
        inventory = load_inventory(None if path is None else os.fspath(path))
    except DataError as exc:
        return (), list(exc.problems)
    return tuple(inventory.ids()), []


def _default_library() -> Any:
    from planner.library.targets import load_library
    return load_library()


def _default_references() -> dict[str, str]:
    from planner.references import REFERENCES
    return REFERENCES


def _is_id(value: Any) -> bool:
    """True for a well-formed id (malformed ones are already reported by the schema)."""
    return isinstance(value, str) and re.match(ID_PATTERN, value) is not None


def _in_line_order(path: str, problems: list[str]) -> list[str]:
    """Sort the problems of ``path`` by line; problems of other files stay after theirs."""
    prefix = f"{path}:"
    groups: list[tuple[int, list[str]]] = []
    for problem in problems:
        rest = problem[len(prefix):] if problem.startswith(prefix) else None
        line_text = rest.split(":", 1)[0] if rest else ""
        if rest is None and groups:
            groups[-1][1].append(problem)
            continue
        line = int(line_text) if line_text.isdigit() else 0
        groups.append((line, [problem]))
    groups.sort(key=lambda group: group[0])
    return [problem for _, members in groups for problem in members]


def _finite(value: Any) -> float | None:
    """``value`` as a float when it is a finite number a float can hold, else ``None`` (the
    schema pass has already reported anything else with its line)."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return None
    if isinstance(value, int) and abs(value) > 1e300:
        return None
    number = float(value)
    return number if math.isfinite(number) else None


def _items(value: Any) -> list:
    """The items of a YAML list, or none when the value is not a list (the schema pass has
    already reported the wrong type with its line)."""
    return value if isinstance(value, list) else []


def _suggest(value: str, valid: list[str], what: str) -> str:
    close = difflib.get_close_matches(value, valid, n=3)
    if close:
        return f"; did you mean {', '.join(repr(c) for c in close)}?"
    return f"; valid {what}: {', '.join(sorted(valid))}"


class _Checker:
    """Checks that need more than the file: library, inventory, bibliography."""

    def __init__(self, path: Path, data: dict[Any, Any], problems: ProblemCollector,
                 library: Any, references: dict[str, str]) -> None:
        self.path = path
        self.data = data
        self.problems = problems
        self.library = library
        local = data.get("local_references")
        self.local_references = local if isinstance(local, dict) else {}
        self.references = references

    def run(self) -> None:
        self.check_local_references()
        self.check_sources(self.data, ())
        probe_ids = self.probe_ids()
        views = self.data.get("views")
        if isinstance(views, list):
            self.check_views(views, probe_ids)
        self.check_time_budget(views)

    def check_local_references(self) -> None:
        for key in self.local_references:
            if key in self.references:
                self.problems.add(("local_references", key),
                                  f"key {key!r} is already in the shared bibliography; "
                                  "choose a key of your own")

    def check_sources(self, node: Any, path: tuple) -> None:
        """Every ``source`` next to a ``status`` must be a known bibliography key."""
        if isinstance(node, dict):
            source = node.get("source")
            if "status" in node and isinstance(source, str) \
                    and re.match(REFERENCE_KEY_PATTERN, source.strip()):
                key = source.strip()
                if key not in self.references and key not in self.local_references:
                    self.problems.add(path + ("source",), f"unknown bibliography key {key!r}; "
                                      "add it to local_references or use a shared key")
            for key, value in node.items():
                if key != "local_references":
                    self.check_sources(value, path + (key,))
        elif isinstance(node, list):
            for index, item in enumerate(node):
                self.check_sources(item, path + (index,))

    def probe_ids(self) -> tuple[str, ...] | None:
        equipment = self.data.get("equipment")
        if not isinstance(equipment, dict):
            return None
        name = equipment.get("inventory")
        inventory: Path | None = None
        where: tuple = ("equipment",)
        if isinstance(name, str) and name.strip():
            inventory = self.path.parent / name.strip()
            where = ("equipment", "inventory")
        elif name is not None:
            return None
        ids, inventory_problems = read_probe_ids(inventory)
        if inventory_problems:
            shown = inventory if inventory is not None else "(the default inventory)"
            self.problems.add(where, f"probe inventory {shown} is not usable; its problems "
                                     "follow")
            self.problems.extend(inventory_problems)
            return None
        self.check_probe(equipment.get("probe"), ids, ("equipment", "probe"))
        for index, label in enumerate(_items(equipment.get("alternative_probes"))):
            self.check_probe(label, ids, ("equipment", "alternative_probes", index))
        return ids

    def check_probe(self, label: Any, ids: tuple[str, ...] | None, path: tuple) -> None:
        if ids is None or not _is_id(label) or label in ids:
            return
        self.problems.add(path, f"unknown probe {label!r} in the probe inventory"
                          + _suggest(label, list(ids), "probes"))

    def check_views(self, views: list[Any], probe_ids: tuple[str, ...] | None) -> None:
        seen_views: dict[str, int] = {}
        seen_measurements: dict[str, tuple] = {}
        pulsed_policy = (self.data.get("safety") or {}).get("pulsed_doppler") \
            if isinstance(self.data.get("safety"), dict) else None
        for index, view in enumerate(views):
            if not isinstance(view, dict):
                continue
            path = ("views", index)
            view_id = view.get("id")
            if isinstance(view_id, str):
                if view_id in seen_views:
                    self.problems.add(path + ("id",), f"duplicate view id {view_id!r} "
                                      f"(also views[{seen_views[view_id]}])")
                seen_views.setdefault(view_id, index)
            windows = self.check_target(view, path)
            self.check_window(view.get("window"), windows, view.get("target"), path + ("window",))
            self.check_probe(view.get("probe"), probe_ids, path + ("probe",))
            for f_index, fallback in enumerate(_items(view.get("fallbacks"))):
                if isinstance(fallback, dict):
                    f_path = path + ("fallbacks", f_index)
                    self.check_window(fallback.get("window"), windows, view.get("target"),
                                      f_path + ("window",))
                    self.check_probe(fallback.get("probe"), probe_ids, f_path + ("probe",))
            self.check_side(view, path)
            for m_index, measurement in enumerate(_items(view.get("measurements"))):
                if isinstance(measurement, dict):
                    m_path = path + ("measurements", m_index)
                    m_id = measurement.get("id")
                    if isinstance(m_id, str):
                        if m_id in seen_measurements:
                            self.problems.add(m_path + ("id",), f"duplicate measurement id "
                                                                f"{m_id!r}")
                        seen_measurements.setdefault(m_id, m_path)
                    for t_index, band in enumerate(_items(measurement.get("thresholds"))):
                        if isinstance(band, dict):
                            self.check_band(band, m_path + ("thresholds", t_index))
            doppler = view.get("doppler")
            if (pulsed_policy == "not_permitted" and isinstance(doppler, dict)
                    and "pulsed_doppler" in _items(doppler.get("modes"))):
                self.problems.add(path + ("doppler", "modes"), "uses pulsed_doppler although "
                                  "safety.pulsed_doppler is not_permitted")

    def check_target(self, view: dict[Any, Any], path: tuple) -> list[str] | None:
        target = view.get("target")
        if not _is_id(target):
            return None
        targets = self.library.targets
        if target not in targets:
            self.problems.add(path + ("target",), f"unknown target {target!r}"
                              + _suggest(str(target), list(targets), "targets"))
            return None
        return [window.id for window in targets[target].windows]

    def check_window(self, window: Any, windows: list[str] | None, target: Any,
                     path: tuple) -> None:
        if windows is None or not _is_id(window) or window in windows:
            return
        self.problems.add(path, f"unknown window {window!r} for target {target!r}; "
                                f"its windows: {', '.join(windows)}")

    def check_side(self, view: dict[Any, Any], path: tuple) -> None:
        """A side only for a paired target; the view's window and its fallbacks serve it."""
        side, target_id = view.get("side"), view.get("target")
        target = self.library.targets.get(target_id) if isinstance(target_id, str) else None
        if side not in ("left", "right") or target is None:
            return
        if not target.paired:
            self.problems.add(path + ("side",), f"{target.name} is not a paired structure: "
                                                "a side does not apply")
            return
        sided = {w.id: w.side for w in target.windows}
        steps = [(path + ("window",), view.get("window"))] + [
            (path + ("fallbacks", i, "window"), f.get("window"))
            for i, f in enumerate(_items(view.get("fallbacks"))) if isinstance(f, dict)]
        for where, window in steps:
            if isinstance(window, str) and sided.get(window) not in (None, side):
                self.problems.add(where, f"window {window!r} serves the {sided[window]} "
                                         f"{target.name_in_sentence}, not the {side} of this view")

    def check_band(self, band: dict[Any, Any], path: tuple) -> None:
        def number(key: str) -> float | None:
            return _finite(band.get(key))

        if not any(band.get(key) is not None for key in ("above", "at_or_above", "below",
                                                         "at_or_below")):
            self.problems.add(path, "a threshold needs a bound: above, at_or_above, below "
                                    "or at_or_below")
            return
        for first, second in (("above", "at_or_above"), ("below", "at_or_below")):
            if band.get(first) is not None and band.get(second) is not None:
                self.problems.add(path + (second,), f"give either {first} or {second}, not both")
        lower = number("above") if number("above") is not None else number("at_or_above")
        upper = number("below") if number("below") is not None else number("at_or_below")
        if lower is not None and upper is not None and lower >= upper:
            self.problems.add(path, f"empty band: lower bound {lower:g} is not below the upper "
                                    f"bound {upper:g}")

    def check_time_budget(self, views: Any) -> None:
        safety = self.data.get("safety")
        limit = safety.get("max_scan_minutes") if isinstance(safety, dict) else None
        limit_value = _finite(limit.get("value")) if isinstance(limit, dict) else None
        if not isinstance(views, list) or limit_value is None:
            return
        total = 0.0
        for view in views:
            minutes = _finite(view.get("expected_minutes")) if isinstance(view, dict) else None
            if minutes is not None:
                total += minutes
        if total > limit_value:
            self.problems.add(("safety", "max_scan_minutes"),
                              f"the views' expected minutes add up to {total:g} min, more than "
                              f"the limit of {limit_value:g} min")


def _parse(data: dict[Any, Any], problems: ProblemCollector) -> Protocol | None:
    """Validate against the model generated from :class:`Protocol`; ``None`` on problems."""
    from planner.files.base import validate_data
    from planner.files.dataclass_model import build, model_for
    model = validate_data(model_for(Protocol), data, problems.add)
    return None if model is None else build(Protocol, model)


def load_protocol(path: str | os.PathLike[str], *, library: Any = None,
                  references: dict[str, str] | None = None) -> Protocol:
    """Load a protocol file and check it completely.

    Parameters
    ----------
    path : str or os.PathLike
        The protocol YAML file.
    library : TargetLibrary, optional
        Target library with ``.targets[id].windows[i].id``; the installed one by default.
    references : dict, optional
        Bibliography ``{key: citation}``; :data:`planner.references.REFERENCES` by default.

    Returns
    -------
    Protocol
        The validated protocol.

    Raises
    ------
    DataError
        Listing every problem as ``file:line:col: key.path: message``.
    """
    loaded = load_user_yaml(path, kind="protocol")
    problems = ProblemCollector(path, loaded)
    if "probes" in loaded.data and "views" not in loaded.data:
        problems.add(("probes",), "this looks like a probe inventory, not a protocol "
                                  "(it has probes but no views)")
        problems.raise_if_any(title="Invalid protocol")
    version = loaded.data.get("schema_version")
    if "schema_version" in loaded.data and (version != SCHEMA_VERSION
                                            or isinstance(version, bool)):
        problems.add(("schema_version",), f"this release reads schema_version "
                                          f"{SCHEMA_VERSION}, got {describe(version)}")
        problems.raise_if_any(title="Invalid protocol")
    protocol = _parse(loaded.data, problems)
    checker = _Checker(Path(path), loaded.data, problems,
                       library if library is not None else _default_library(),
                       references if references is not None else _default_references())
    checker.run()
    problems.problems[:] = _in_line_order(str(path), problems.problems)
    problems.raise_if_any(title="Invalid protocol")
    if protocol is None:  # pragma: no cover - parse_model reports why it returns None
        raise DataError(f"{path}: protocol could not be read", title="Invalid protocol")
    return protocol


def check_files(paths: list[str | os.PathLike[str]], *, library: Any = None,
                references: dict[str, str] | None = None) -> dict[str, list[str]]:
    """Check several protocol files; return ``{path: problems}`` (empty list = valid)."""
    library = library if library is not None else _default_library()
    results: dict[str, list[str]] = {}
    for path in paths:
        try:
            load_protocol(path, library=library, references=references)
        except DataError as exc:
            results[str(path)] = list(exc.problems)
        else:
            results[str(path)] = []
    return results
