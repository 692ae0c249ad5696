"""Gestational age in obstetric plans: fetal growth, uterine geometry and skull ossification.

The fetal head, heart and trunk, the amniotic space in front of the fetus, the myometrium
and the fetal skull all change with gestation; the layer stack of an obstetric window
(:func:`planner.body.stack.build_stack_batch`) takes them from here. Every function is pure
and accepts scalars or arrays of gestational age in completed weeks from the last menstrual
period (``weeks``, float).

Sources
-------
* Fetal size: 50th-centile equations of the INTERGROWTH-21st fetal growth standards
  (Papageorghiou2014Fetal: HC, BPD outer-to-outer, AC, FL; 14+0 to 40+0 weeks, extrapolated
  outside and flagged by the target's range) and of the INTERGROWTH-21st crown-rump length
  standard (Papageorghiou2014CRL, 58-105 days).
* Tables in ``planner/data/gestation.yaml`` (each with source and status): myometrium
  (Degani1998Myometrium, from memory), linear size of the amniotic space (derived from
  BraceWolf1989 and MooreCayle1990), fetal parietal-bone thickness and mineralisation
  (FetalSkullOssification, from memory: no measured table of fetal-bone attenuation against
  gestation was available), symphysis-fundal height (Papageorghiou2016SFH, verified).
* Gestational ranges of each obstetric view (Salomon2013FirstTrimester, FMFNuchal,
  ISUOG2022MidTrimester and common practice), also in ``gestation.yaml``.
"""

from __future__ import annotations

from dataclasses import replace
from functools import lru_cache
from typing import Any

import numpy as np

from planner.datafiles import package_data
from planner.errors import InputError
from planner.physics.tissues import Tissue, get_tissue
from planner.provenance import Sourced
from planner.records import record

__all__ = ["GROWTH_ROLES", "GestationRange", "GestationUse", "ac_mm", "amniotic_scale",
           "bpd_mm", "crl_mm", "fetal_skull_tissue", "fl_mm", "fundal_height_cm",
           "gestation_range", "grown_thickness_cm", "hc_mm", "myometrium_cm",
           "resolve_gestation", "skull_mineral_fraction", "skull_thickness_mm"]

CHART_SOURCE = Sourced(0.0, "Papageorghiou2014Fetal", "from_memory",
                       "INTERGROWTH-21st 50th-centile equations, GA in exact weeks, size in mm")
"""Provenance of the fetal-size equations below (coefficients from memory, agreeing with two
independent public implementations; checked against Hadlock1984 in the tests)."""


def _w(weeks) -> np.ndarray:
    return np.asarray(weeks, dtype=float)


def hc_mm(weeks):
    """Head circumference, 50th centile: -28.2849 + 1.69267 GA^2 - 0.397485 GA^2 ln GA. [mm]

    Papageorghiou2014Fetal (INTERGROWTH-21st); ``weeks`` [weeks]."""
    w = _w(weeks)
    return -28.2849 + 1.69267 * w ** 2 - 0.397485 * w ** 2 * np.log(w)


def bpd_mm(weeks):
    """Biparietal diameter, outer to outer, 50th centile:
    5.60878 + 0.158369 GA^2 - 0.00256379 GA^3. [mm] (Papageorghiou2014Fetal)"""
    w = _w(weeks)
    return 5.60878 + 0.158369 * w ** 2 - 0.00256379 * w ** 3


def ac_mm(weeks):
    """Abdominal circumference, 50th centile: -81.3243 + 11.6772 GA - 0.000561865 GA^3. [mm]
    (Papageorghiou2014Fetal)"""
    w = _w(weeks)
    return -81.3243 + 11.6772 * w - 0.000561865 * w ** 3


def fl_mm(weeks):
    """Femur length, 50th centile: -39.9616 + 4.32298 GA - 0.0380156 GA^2. [mm]
    (Papageorghiou2014Fetal)"""
    w = _w(weeks)
    return -39.9616 + 4.32298 * w - 0.0380156 * w ** 2


def crl_mm(weeks):
    """Crown-rump length, median: -50.6562 + 0.815118 d + 0.00535302 d^2 with d = 7 GA days.
    [mm] (Papageorghiou2014CRL; standard for 58-105 days, held at 1 mm below)."""
    d = 7.0 * _w(weeks)
    return np.maximum(-50.6562 + 0.815118 * d + 0.00535302 * d ** 2, 1.0)


def _table(name: str) -> dict[str, Any]:
    return package_data("gestation.yaml")["tables"][name]


def _interp(name: str, weeks):
    table = _table(name)
    out = np.interp(_w(weeks), table["weeks"], table["values"])
    return float(out) if np.ndim(out) == 0 else out


def myometrium_cm(weeks):
    """Anterior myometrium in front of the fetus (Degani1998Myometrium, from memory). [cm]"""
    return _interp("myometrium_cm", weeks)


def amniotic_scale(weeks):
    """Linear size of the amniotic space relative to 20 weeks (derived from BraceWolf1989
    volumes before 16 weeks and MooreCayle1990 amniotic fluid index after). [-]"""
    return _interp("amniotic_scale", weeks)


def skull_thickness_mm(weeks):
    """Fetal parietal-bone thickness (FetalSkullOssification, from memory). [mm]"""
    return _interp("skull_thickness_mm", weeks)


def skull_mineral_fraction(weeks):
    """Share of the adult cortical-bone contrast the fetal parietal bone has reached
    (FetalSkullOssification, from memory). [-]"""
    return _interp("skull_mineral_fraction", weeks)


def fundal_height_cm(weeks):
    """Symphysis-fundal height, 50th centile (Papageorghiou2016SFH, verified). [cm]"""
    return _interp("fundal_height_cm", weeks)


@lru_cache(maxsize=64)
def fetal_skull_tissue(weeks: float) -> Tissue:
    """The fetal parietal bone at ``weeks`` [weeks]: soft tissue plus the mineral fraction
    (:func:`skull_mineral_fraction`) of the contrast of adult cortical bone in speed, density
    and attenuation (a mixing rule, derived; the attenuation exponent of bone kept)."""
    soft, bone = get_tissue("soft_tissue"), get_tissue("cortical_bone")
    f = float(skull_mineral_fraction(weeks))
    mix = {name: getattr(soft, name) + f * (getattr(bone, name) - getattr(soft, name))
           for name in ("speed_m_per_s", "density_kg_per_m3", "attenuation_db_per_cm_mhz")}
    derived = Sourced(f, "Derived", "derived",
                      f"soft tissue + {f:.2f} x (cortical bone - soft tissue); mineral fraction "
                      "from FetalSkullOssification (from memory)")
    prov = dict(bone.provenance, **{name: derived for name in mix})
    return replace(bone, id=f"fetal_parietal_bone_{weeks:g}w",
                   name=f"Fetal parietal bone, {weeks:g} weeks ({100 * f:.0f} % mineralised)",
                   provenance=prov, **mix)


GROWTH_ROLES: dict[str, str] = {
    "myometrium": "myometrium thickness (table)",
    "amniotic_fluid": "amniotic space, scaled from 20 weeks",
    "gestational_sac": "amniotic space, scaled from 12 weeks",
    "embryo": "crown-rump length, scaled from 12 weeks",
    "fetal_skull": "parietal-bone thickness (table)",
    "fetal_brain": "biparietal diameter less two skull thicknesses",
    "fetal_head": "biparietal diameter, scaled from 20 weeks",
    "fetal_trunk": "abdominal circumference, scaled from 20 weeks",
    "fetal_heart": "abdominal circumference, scaled from 20 weeks",
}
"""Path-layer roles that follow gestation, and the quantity each follows. The heart and the
chest follow the abdominal circumference: the cardiothoracic ratio is nearly constant through
gestation (common practice), so the heart grows with the trunk."""


def _reference(kind: str) -> float:
    return float(package_data("gestation.yaml")["reference_weeks"][kind]["value"])


@lru_cache(maxsize=512)
def grown_thickness_cm(role: str, base_cm: float, weeks: float) -> float:
    """Thickness of a growth-role path layer at ``weeks`` [weeks].

    ``base_cm`` [cm] is the library's thickness at the reference gestation (20 weeks, 12 for
    the embryo and its sac, ``reference_weeks`` in ``gestation.yaml``). The myometrium and the
    skull follow their tables, the path through the fetal brain is the biparietal diameter
    (outer to outer) less the two parietal bones, and the other roles scale ``base_cm`` by the
    ratio of their quantity (:data:`GROWTH_ROLES`) to its value at the reference. [cm]
    """
    fetal, early = _reference("fetal"), _reference("embryo")
    if role == "myometrium":
        return float(myometrium_cm(weeks))
    if role == "fetal_skull":
        return float(skull_thickness_mm(weeks)) / 10.0
    if role == "fetal_brain":
        return max(float(bpd_mm(weeks)) - 2.0 * float(skull_thickness_mm(weeks)), 1.0) / 10.0
    ratio = {
        "amniotic_fluid": lambda: amniotic_scale(weeks) / amniotic_scale(fetal),
        "gestational_sac": lambda: amniotic_scale(weeks) / amniotic_scale(early),
        "embryo": lambda: crl_mm(weeks) / crl_mm(early),
        "fetal_head": lambda: bpd_mm(weeks) / bpd_mm(fetal),
        "fetal_trunk": lambda: ac_mm(weeks) / ac_mm(fetal),
        "fetal_heart": lambda: ac_mm(weeks) / ac_mm(fetal),
    }.get(role)
    return base_cm if ratio is None else base_cm * max(float(ratio()), 0.05)


@record(slots=False)
class GestationRange:
    """The gestational range of one obstetric view.

    ``valid`` (lo, hi) [weeks]: the view and its growth chart are made for it (no flag);
    ``scan`` (lo, hi) [weeks]: practice still scans (a validity flag outside ``valid``);
    ``default`` [weeks]: planned when no gestation is given.
    """

    target_id: str
    valid: Sourced
    scan: Sourced
    default: Sourced
    before: str = ""
    after: str = ""
    nuchal_translucency: Sourced | None = None


def _sourced(raw: dict) -> Sourced:
    value = raw["value"]
    return Sourced(tuple(value) if isinstance(value, list) else value, raw["source"],
                   raw["status"], raw.get("note", ""))


@lru_cache(maxsize=32)
def gestation_range(target_id: str) -> GestationRange | None:
    """The gestational range of ``target_id``, or None for a target without one."""
    raw = package_data("gestation.yaml")["targets"].get(target_id)
    if raw is None:
        return None
    nt = raw.get("nuchal_translucency")
    return GestationRange(target_id, _sourced(raw["valid"]), _sourced(raw["scan"]),
                          _sourced(raw["default"]), raw.get("before", ""), raw.get("after", ""),
                          None if nt is None else _sourced(nt))


@record(slots=False)
class GestationUse:
    """The gestation a plan's geometry uses.

    ``weeks`` [weeks]; ``given`` false when the range's default was assumed; ``outside`` a
    message when the gestation lies outside the view's valid range (still scanned), with
    ``valid`` (lo, hi) [weeks] and its source and status; ``notes`` for the plan's
    assumptions.
    """

    weeks: float
    given: bool
    valid: tuple[float, float]
    source: str
    status: str
    outside: str = ""
    notes: tuple[str, ...] = ()


def _weeks_text(weeks: float) -> str:
    whole = int(weeks + 1e-9)
    days = int(round((weeks - whole) * 7))
    return f"{whole}+{days}" if days else f"{whole}"


@lru_cache(maxsize=256)
def resolve_gestation(target_id: str, weeks: float | None, target_name: str = "",
                      roles: frozenset[str] | None = None) -> GestationUse | None:
    """The gestation for a plan of ``target_id``: the given ``weeks`` [weeks] or the range's
    default; None for a target without a gestational range. ``roles``: the path-layer roles
    of the planned windows (default: every growth role); the plan states the fetal size only
    when one of them follows gestation, and the skull only when it is on the path.

    Raises
    ------
    InputError
        One line when ``weeks`` lies outside the range in which practice scans the view.
    """
    rng = gestation_range(target_id)
    if rng is None:
        return None
    name = target_name or target_id
    (vlo, vhi), (slo, shi) = rng.valid.value, rng.scan.value
    notes: list[str] = []
    if weeks is None:
        used = float(rng.default.value)
        notes.append(f"Gestation not given: {used:g} weeks assumed ({rng.default.note}; "
                     f"{rng.default.source}); give the gestational age to plan another.")
    else:
        used = float(weeks)
        if used < slo or used > shi:
            hint = rng.before if used < slo else rng.after
            raise InputError(
                f"gestational age {used:g} weeks is outside the range for {name} "
                f"({_weeks_text(slo)} to {_weeks_text(shi)} weeks; {rng.scan.source})"
                + (f": {hint}" if hint else ""), title="Gestation out of range")
    outside = ""
    if not vlo <= used <= vhi:
        outside = (f"gestational age {used:g} weeks is outside the planned range of this view "
                   f"({_weeks_text(vlo)} to {_weeks_text(vhi)} weeks, {rng.valid.note}); the "
                   "growth chart is extrapolated and the view may be incomplete")
    if rng.nuchal_translucency is not None:
        lo, hi = rng.nuchal_translucency.value
        inside = lo <= used <= hi
        notes.append(f"Nuchal translucency {'can' if inside else 'cannot'} be measured at {used:g} "
                     f"weeks ({rng.nuchal_translucency.note}; {rng.nuchal_translucency.source}).")
    roles = frozenset(GROWTH_ROLES) if roles is None else roles
    if roles & frozenset(GROWTH_ROLES):
        notes.append(_size_note(target_id, used, "fetal_skull" in roles))
    return GestationUse(used, weeks is not None, (float(vlo), float(vhi)), rng.valid.source,
                        rng.valid.status, outside, tuple(notes))


def _size_note(target_id: str, weeks: float, skull: bool) -> str:
    """One sentence with the fetal size the geometry follows at ``weeks``."""
    if target_id == "embryo":
        return (f"At {weeks:g} weeks the median crown-rump length is {float(crl_mm(weeks)):.0f} mm "
                "(Papageorghiou2014CRL); the embryo and its sac are scaled from 12 weeks.")
    size = (f"At {weeks:g} weeks: BPD {float(bpd_mm(weeks)):.0f} mm, HC {float(hc_mm(weeks)):.0f} mm, "
            f"AC {float(ac_mm(weeks)):.0f} mm (INTERGROWTH-21st 50th centile, Papageorghiou2014Fetal)")
    if weeks >= 16:
        size += f"; fundal height about {float(fundal_height_cm(weeks)):.0f} cm (Papageorghiou2016SFH)"
    if skull:
        size += (f"; fetal parietal bone about {float(skull_thickness_mm(weeks)):.1f} mm, "
                 f"{100 * float(skull_mineral_fraction(weeks)):.0f} % mineralised (from memory)")
    return size + "."
