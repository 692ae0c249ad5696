"""Each probe's signal budget from its phantom QA log, with the QA checks departments make.

A measured depth of penetration (DOP) in a QA phantom of known attenuation fixes the probe's
diffuse round-trip budget through the engine's own broadband loss model
(:func:`planner.physics.phantom.budget_from_penetration_db`; the probe's pulse bandwidth from
the inventory, centred at the measurement's frequency). The budget of the probe's latest
session (measurements on its latest date, their median) is used by the plan.

Checks (each a QA warning with the file and line of the measurement):

- plausibility against the model: a measurement whose derived budget lies more than
  :data:`IMPLAUSIBLE_FRACTION` (50 %) from the default budget is not used. The verified 40/f
  teaching rule's budget (40 dB) is 33 % below the 60 dB default, so a budget beyond 50 % lies
  outside the whole spread between the two anchors and more likely comes from a wrong phantom
  attenuation, frequency or unit than from a real probe (derived). The check is made on the
  budget, not on the depth: for wide pulses the model's loss grows ever more slowly with depth
  (the received spectrum slides down; :mod:`planner.physics.broadband`), so the default budget
  may predict no finite depth at all (75 % bandwidth at 3.5 MHz in 0.5 dB/cm/MHz), while the
  budget a measured depth implies is always defined;
- consistency within a session (one probe, one date, several frequencies or repeats): the
  budget is a property of the probe, so each measurement's DOP is compared with the DOP the
  session's median budget implies at its frequency; more than :data:`QA_ACTION_CM` (1 cm) away
  is not used (with two measurements that disagree by more than 2 cm, neither is);
- change: a latest session more than 1 cm (as a DOP at the baseline's frequency and phantom)
  from the previous one is used but flagged (repeat the test before relying on it);
- trend: a fall of the DOP of more than 1 cm from the probe's baseline (first session) is the
  QA finding departments act on (Goodsitt1998; ServiceManualPenetration).

Scatter: the repeatability of the probe's own measurements sets the spread of its budget in the
reach probability (:func:`planner.engine.spread.budget_sd_db`). It is the pooled s.d. of the
used measurements' budgets about their session means (sum of squared deviations over the sum of
``n - 1``: repeats and other frequencies on one date measure the same budget), once the log has
at least :data:`SCATTER_MIN_DOF` degrees of freedom; it never falls below the reading precision
:data:`planner.engine.spread.QA_BUDGET_SD_DB` (a close agreement of a few repeats does not make
a DOP read finer than about 0.4 cm; derived). A log without repeats keeps that precision.
"""

from __future__ import annotations

import math
import statistics
from dataclasses import dataclass, field, replace

import numpy as np

from planner.engine.spread import QA_BUDGET_SD_DB
from planner.library.probes import ProbeInventory
from planner.library.qa_log import QaEntry, QaLog
from planner.physics import phantom
from planner.physics.constants import BANDWIDTH_FRACTION_DEFAULT, SIGNAL_BUDGET_DIFFUSE_DB
from planner.records import record

__all__ = ["IMPLAUSIBLE_FRACTION", "QA_ACTION_CM", "SCATTER_MIN_DOF", "MeasurementQa", "ProbeQa",
           "QaReport", "apply_qa", "budget_scatter_db", "calibrated_inventory", "qa_report"]

QA_ACTION_CM: float = 1.0
"""Change of depth of penetration that calls for action: 1 cm from baseline (Goodsitt1998,
from memory; ServiceManualPenetration, verified: "degradation in excess of 1 cm"). [cm]"""

IMPLAUSIBLE_FRACTION: float = 0.50
"""Largest relative distance of a derived budget from the default budget that is still used
(derived: beyond the 33 % between the 40/f rule's budget and the default, module docstring). [-]"""

SCATTER_MIN_DOF: int = 2
"""Degrees of freedom (measurements beyond one per session) from which a log's own scatter
sets its probe's budget spread (fewer: the reading precision alone; common practice). [-]"""

QA_SOURCES: tuple[str, ...] = ("IEC61391", "IEC61391DOP", "Goodsitt1998", "ServiceManualPenetration",
                                "PhantomUserGuideDOP", "Derived")


@record(slots=False)
class MeasurementQa:
    """One measurement with the budget it implies and what the checks say about it."""

    entry: QaEntry
    budget_db: float
    predicted_cm: float | None
    """DOP the default budget predicts for this phantom and frequency (None: the model's loss
    does not reach the default budget within 100 cm). [cm]"""
    used: bool
    flags: tuple[str, ...] = ()


@record(slots=False)
class ProbeQa:
    """One probe's QA history and its derived budget (None: no usable measurement)."""

    probe: str
    known: bool
    bandwidth_fraction: float
    measurements: tuple[MeasurementQa, ...]
    budget_db: float | None
    date: str | None
    sessions: tuple[tuple[str, float, float], ...] = ()
    """``(date, budget_db, dop_equivalent_cm)`` per session; the DOP equivalent at the
    baseline's frequency and phantom. [dB], [cm]"""
    trend_cm_per_month: float | None = None
    flags: tuple[str, ...] = field(default_factory=tuple)
    baseline: tuple[float, float] | None = None
    """``(frequency_mhz, phantom_attenuation_db_per_cm_mhz)`` of the first used measurement: the
    conditions the sessions' DOP equivalents are given at."""
    scatter_db: float | None = None
    """Pooled within-session s.d. of the used measurements' budgets (None below
    :data:`SCATTER_MIN_DOF` degrees of freedom). [dB]"""
    scatter_dof: int = 0
    """Its degrees of freedom. [-]"""
    budget_sd_db: float | None = None
    """The spread of the budget the plans use: the scatter, but never below the reading
    precision (module docstring); None when no budget is derived. [dB]"""

    @property
    def fall_cm(self) -> float | None:
        """DOP-equivalent fall from the first session to the last (positive: a fall). [cm]"""
        if len(self.sessions) < 2:
            return None
        return self.sessions[0][2] - self.sessions[-1][2]


@record(slots=False)
class QaReport:
    """Every probe of a QA log, in order of first appearance."""

    path: str
    probes: tuple[ProbeQa, ...]
    demo: bool = False

    def get(self, probe_id: str) -> ProbeQa | None:
        for p in self.probes:
            if p.probe == probe_id:
                return p
        return None


def _where(log: QaLog, e: QaEntry) -> str:
    line = f":{e.line}" if e.line is not None else ""
    return f"{log.path}{line}: measurements[{e.index}]"


@dataclass
class _Rated:
    """A measurement while it is checked (mutable: the session check may drop it)."""

    entry: QaEntry
    budget_db: float
    predicted_cm: float | None
    flags: list[str]

    @property
    def used(self) -> bool:
        return not self.flags


def _rate(log: QaLog, e: QaEntry, bw: float) -> _Rated:
    """The budget a measurement implies and the plausibility check against the model."""
    budget = float(phantom.budget_from_penetration_db(
        e.depth_of_penetration_cm, e.phantom_attenuation_db_per_cm_mhz, e.frequency_mhz, bw))
    reach = float(phantom.penetration_cm(SIGNAL_BUDGET_DIFFUSE_DB.value,
                                         e.phantom_attenuation_db_per_cm_mhz, e.frequency_mhz, bw))
    predicted = reach if np.isfinite(reach) else None
    default = SIGNAL_BUDGET_DIFFUSE_DB.value
    off = abs(budget - default) / default
    flags = []
    if off > IMPLAUSIBLE_FRACTION:
        expect = f"; the default predicts {predicted:.1f} cm" if predicted is not None else ""
        flags.append(f"{_where(log, e)}: depth of penetration {e.depth_of_penetration_cm:g} cm at "
                     f"{e.frequency_mhz:g} MHz in a {e.phantom_attenuation_db_per_cm_mhz:g} dB/cm/MHz "
                     f"phantom implies a {budget:.1f} dB budget, {100 * off:.0f} % from the default "
                     f"{default:g} dB (limit {100 * IMPLAUSIBLE_FRACTION:.0f} %{expect}): not used; "
                     "check the phantom attenuation, frequency and units")
    return _Rated(e, budget, predicted, flags)


def _check_session(log: QaLog, items: list[_Rated], bw: float) -> None:
    """Drop the measurements of one session that disagree with its median budget (> 1 cm)."""
    good = [r for r in items if r.used]
    if len(good) < 2:
        return
    middle = statistics.median(r.budget_db for r in good)
    for r in good:
        e = r.entry
        at = float(phantom.penetration_cm(middle, e.phantom_attenuation_db_per_cm_mhz,
                                          e.frequency_mhz, bw))
        if abs(at - e.depth_of_penetration_cm) > QA_ACTION_CM:
            r.flags.append(f"{_where(log, e)}: {e.depth_of_penetration_cm:g} cm is "
                           f"{abs(at - e.depth_of_penetration_cm):.1f} cm from the {at:.1f} cm the "
                           f"session's median budget ({middle:.1f} dB) implies at {e.frequency_mhz:g} "
                           f"MHz (limit {QA_ACTION_CM:g} cm): not used")


def budget_scatter_db(sessions: list[list[float]]) -> tuple[float | None, int]:
    """Pooled within-session s.d. of budgets and its degrees of freedom: ``sqrt(sum (b - mean of
    its session)^2 / sum (n - 1))`` over the sessions' used budgets; None below
    :data:`SCATTER_MIN_DOF` degrees of freedom. [dB], [-]"""
    dof = sum(len(b) - 1 for b in sessions if b)
    if dof < SCATTER_MIN_DOF:
        return None, dof
    ss = sum(sum((x - statistics.fmean(b)) ** 2 for x in b) for b in sessions if b)
    return math.sqrt(ss / dof), dof


def _probe_qa(log: QaLog, probe_id: str, entries: list[QaEntry], inventory: ProbeInventory) -> ProbeQa:
    probe = next((p for p in inventory.probes if p.id == probe_id), None)
    bw = probe.bandwidth_fraction if probe is not None else BANDWIDTH_FRACTION_DEFAULT.value
    flags: list[str] = []
    if probe is None:
        flags.append(f"probe {probe_id!r} is not in the {inventory.origin}: its budget is not used "
                     f"(pulse bandwidth taken as {bw:g})")
    entries = sorted(entries, key=lambda e: (e.date, e.index))
    rated = [_rate(log, e, bw) for e in entries]
    by_date: dict[str, list[_Rated]] = {}
    for r in rated:
        by_date.setdefault(r.entry.date.isoformat(), []).append(r)
    for items in by_date.values():
        _check_session(log, items, bw)
    measurements = tuple(MeasurementQa(r.entry, round(r.budget_db, 2),
                                       None if r.predicted_cm is None else round(r.predicted_cm, 2),
                                       r.used, tuple(r.flags)) for r in rated)
    for m in measurements:
        flags.extend(m.flags)
    sessions_raw = [(d, statistics.median(r.budget_db for r in items if r.used))
                    for d, items in sorted(by_date.items()) if any(r.used for r in items)]
    sessions: list[tuple[str, float, float]] = []
    trend = None
    base = next((r.entry for r in rated if r.used), entries[0])
    if sessions_raw:
        for d, b in sessions_raw:
            sessions.append((d, round(b, 1), round(_dop_equivalent_cm(b, base, bw), 2)))
        if len(sessions) >= 2:
            trend = _slope_cm_per_month(sessions)
            last, prev, first = sessions[-1], sessions[-2], sessions[0]
            if abs(last[2] - prev[2]) > QA_ACTION_CM:
                flags.append(f"{log.path}: probe {probe_id}: the latest session ({last[0]}) is "
                             f"{last[2] - prev[2]:+.1f} cm from the previous ({prev[0]}) as a depth of "
                             f"penetration (limit {QA_ACTION_CM:g} cm): used, but repeat the test "
                             "before relying on it")
            fall = first[2] - last[2]
            if fall > QA_ACTION_CM:
                flags.append(f"{log.path}: probe {probe_id}: depth of penetration fell {fall:.1f} cm "
                             f"from the baseline ({first[0]}, {first[2]:.1f} cm) to {last[0]} "
                             f"({last[2]:.1f} cm; at {base.frequency_mhz:g} MHz, "
                             f"{base.phantom_attenuation_db_per_cm_mhz:g} dB/cm/MHz): more than the "
                             f"{QA_ACTION_CM:g} cm action level; have the probe and system checked")
    budget = sessions[-1][1] if sessions and probe is not None else None
    date = sessions[-1][0] if sessions else None
    baseline = None if not sessions else (base.frequency_mhz, base.phantom_attenuation_db_per_cm_mhz)
    scatter, dof = budget_scatter_db([[r.budget_db for r in items if r.used]
                                      for items in by_date.values()])
    spread_db = None if budget is None else round(max(scatter or 0.0, QA_BUDGET_SD_DB.value), 2)
    return ProbeQa(probe_id, probe is not None, bw, measurements, budget, date, tuple(sessions),
                   trend, tuple(flags), baseline,
                   None if scatter is None else round(scatter, 2), dof, spread_db)


def _dop_equivalent_cm(budget_db: float, base: QaEntry, bw: float) -> float:
    """The depth of penetration a budget gives under the baseline's frequency and phantom. [cm]

    Exact (:func:`planner.physics.phantom.penetration_cm`) where the model's loss reaches the
    budget; otherwise (a wide pulse, a budget from another frequency) the baseline depth moved
    by the budget difference over the loss gradient at the baseline depth (derived)."""
    a, f = base.phantom_attenuation_db_per_cm_mhz, base.frequency_mhz
    cm = float(phantom.penetration_cm(budget_db, a, f, bw))
    if np.isfinite(cm):
        return cm
    z0 = base.depth_of_penetration_cm
    lo, hi = phantom.phantom_loss_db(np.array([max(z0 - 0.5, 0.0), z0 + 0.5]), a, f, bw)
    b0 = float(phantom.budget_from_penetration_db(z0, a, f, bw))
    return z0 + (budget_db - b0) / max(float(hi - lo) / (z0 + 0.5 - max(z0 - 0.5, 0.0)), 1e-6)


def _slope_cm_per_month(sessions) -> float:
    """Least-squares slope of the DOP equivalent against time. [cm per 30.44 days]"""
    import datetime
    t = [datetime.date.fromisoformat(d).toordinal() / 30.44 for d, _, _ in sessions]
    z = [cm for _, _, cm in sessions]
    tm, zm = sum(t) / len(t), sum(z) / len(z)
    den = sum((ti - tm) ** 2 for ti in t)
    return 0.0 if den == 0 else round(sum((ti - tm) * (zi - zm) for ti, zi in zip(t, z)) / den, 3)


def qa_report(log: QaLog, inventory: ProbeInventory) -> QaReport:
    """Derive every probe's budget and QA flags from a log (:mod:`planner.engine.qa_budget`)."""
    groups: dict[str, list[QaEntry]] = {}
    for e in log.entries:
        groups.setdefault(e.probe, []).append(e)
    return QaReport(log.path, tuple(_probe_qa(log, pid, es, inventory) for pid, es in groups.items()),
                    log.demo)


def apply_qa(inventory: ProbeInventory, report: QaReport) -> ProbeInventory:
    """The inventory with each probe's QA-derived budget (probes without one keep the default)."""
    probes = []
    for p in inventory.probes:
        q = report.get(p.id)
        if q is None or q.budget_db is None:
            probes.append(p)
            continue
        probes.append(replace(p, budget_db=q.budget_db, budget_sd_db=q.budget_sd_db,
                              budget_origin=f"QA on {q.date}, probe {p.id} ({report.path})"))
    return replace(inventory, probes=tuple(probes))


def calibrated_inventory(inventory: ProbeInventory, qa_path: str | None = None
                         ) -> tuple[ProbeInventory, QaReport | None]:
    """The inventory with the budgets of a QA log (``qa_path``, else the inventory's own
    ``qa_log``), and the log's report; unchanged and None without a log."""
    path = qa_path or inventory.qa_log
    if not path:
        return inventory, None
    from planner.library.qa_log import load_qa_log
    report = qa_report(load_qa_log(path), inventory)
    return apply_qa(inventory, report), report
