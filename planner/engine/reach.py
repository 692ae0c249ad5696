"""Reach ceilings: the loss terms of N layer stacks and the highest usable centre frequencies.

Part of the engine's vectorised core (:mod:`planner.engine.batch`): the round-trip loss of each
stack as power-law terms grouped by exponent (layers and the body wall's aberration), and the
fundamental and harmonic reach ceilings of each probe's pulse solved in one call
(:func:`planner.physics.ceiling.ceiling_rows`). Every number comes from :mod:`planner.physics`.
"""

from __future__ import annotations

import numpy as np

from planner.body.stack import FAT_ROLES, StackBatch
from planner.physics import aberration, attenuation, broadband, ceiling
from planner.physics.arrays import distinct
from planner.physics.constants import SIGNAL_BUDGET_DIFFUSE_DB

ABERRATING_ROLES = FAT_ROLES | {"muscle"}
"""Wall layers whose fat lobules, septa and muscle make the phase screen (HinkelmanAbdominal)."""

RECEIVE_EDGE_MHZ: float = 0.0
"""Lower limit of the received spectrum in the engine's reach: none, the probe's whole Gaussian
pulse-echo spectrum is integrated. [MHz]

:func:`planner.physics.broadband.broadband_loss_db` can cut the spectrum at a transducer's
-40 dB spectral limit (``low_edge_mhz``), a property of the transducer that a simulator's model
gives (the pymust reference reads 2.3 MHz from its 5 MHz, 75 % array; derived). A probe
inventory does not carry that limit: the low end of ``band_mhz`` is the nominal imaging range,
not a -40 dB point (common practice). Cutting at it would make each probe's reach depend on
where its nominal band starts, so that a deeper target, handed to a probe with a lower band,
would be reported to reach a higher frequency. The reach is therefore a property of the pulse
(its bandwidth) and the path only."""


def loss_terms(arrays: dict, sigma_ns, harmonic: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """Round-trip loss terms ``(k, y)`` of N stacks, wall aberration as one more term. (N, n+1)

    Layers: ``k = 2 alpha0 d`` with the layer's exponent (harmonic: times ``(1 + 2**y) / 2``,
    down at f0 and back at 2 f0). Aberration: ``c f^2`` (:mod:`planner.physics.aberration`;
    the harmonic gets its reduced share).
    """
    y = np.broadcast_to(arrays["attenuation_exponent"], arrays["thickness_cm"].shape)
    k = 2.0 * arrays["attenuation_db_per_cm_mhz"] * arrays["thickness_cm"]
    ab = aberration.round_trip_coefficient_db_per_mhz2(sigma_ns)
    if harmonic:
        k = k * 0.5 * (1.0 + 2.0 ** y)
        ab = ab * aberration.HARMONIC_ABERRATION_FACTOR.value * 2.5
    ab = np.broadcast_to(ab, k.shape[:-1])[..., None]
    return np.concatenate([k, ab], axis=-1), np.concatenate([y, np.full(ab.shape, 2.0)], axis=-1)


def grouped_terms(arrays: dict, sigma_ns, harmonic: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """:func:`loss_terms` with the terms of equal exponent summed: ``K`` (N, U), ``Y`` (U,).

    The sum ``sum_i k_i f^y_i`` is unchanged; fewer terms make every loss evaluation cheaper.
    One window's arrays (an exponent per layer) are grouped by one matrix product.
    """
    y = np.asarray(arrays["attenuation_exponent"], dtype=float)
    if y.ndim != 1:
        return broadband.group_exponents(*loss_terms(arrays, sigma_ns, harmonic))
    k = 2.0 * arrays["attenuation_db_per_cm_mhz"] * arrays["thickness_cm"]
    ab = aberration.round_trip_coefficient_db_per_mhz2(sigma_ns)
    if harmonic:
        k = k * (0.5 * (1.0 + 2.0 ** y))
        ab = ab * (aberration.HARMONIC_ABERRATION_FACTOR.value * 2.5)
    ab = np.broadcast_to(ab, k.shape[:-1])[..., None]
    return broadband.group_exponents(np.concatenate([k, ab], axis=-1), np.append(y, 2.0))


def joint_terms(arrays: list[dict], sigma_ns: np.ndarray, harmonic: bool = False):
    """Grouped loss terms of several windows' rows stacked: ``K`` (N, U), ``Y`` (U,) over the
    union of their exponents (a window without an exponent has 0 there)."""
    sizes = [a["thickness_cm"].shape[0] for a in arrays]
    start, parts = 0, []
    for a, n in zip(arrays, sizes):
        parts.append(grouped_terms(a, sigma_ns[start:start + n], harmonic))
        start += n
    if len(parts) == 1:
        return parts[0]
    exps = distinct(np.concatenate([y for _, y in parts]))
    out = np.zeros((sum(sizes), exps.size))
    start = 0
    for (k, y), n in zip(parts, sizes):
        out[start:start + n, np.searchsorted(exps, y)] = k
        start += n
    return out, exps


def pulse_groups(probes, default_budget_db: float | None = None) -> list[tuple[float, float, float]]:
    """The distinct pulses of an inventory: (bandwidth fraction, received-spectrum edge,
    budget offset) triples (the edge is :data:`RECEIVE_EDGE_MHZ` for every probe).

    The offset is :func:`budget_offset_db`: a probe whose diffuse budget was calibrated in a
    QA phantom (``Probe.budget_db``) solves its ceiling with its own budget. [-], [MHz], [dB]
    """
    return sorted({(p.bandwidth_fraction, RECEIVE_EDGE_MHZ, budget_offset_db(p, default_budget_db))
                   for p in probes})


def budget_offset_db(probe, default_budget_db: float | None = None) -> float:
    """How far a probe's own diffuse budget lies from the default one (0 without QA). [dB]

    ``Probe.budget_db`` is the probe's diffuse budget derived from its phantom depth of
    penetration (:mod:`planner.engine.qa_budget`); the default is
    :data:`planner.physics.constants.SIGNAL_BUDGET_DIFFUSE_DB`. A strong specular target keeps its
    allowance on top of either.
    """
    own = getattr(probe, "budget_db", None)
    if own is None:
        return 0.0
    base = SIGNAL_BUDGET_DIFFUSE_DB.value if default_budget_db is None else default_budget_db
    return float(own) - float(base)


def ceilings_mhz(terms_f, terms_h, budget_f, budget_h, pulses):
    """Fundamental and harmonic (transmit) reach ceilings of N stacks for G pulses, solved in one
    vectorised call: two arrays of shape (N, G). [MHz]

    ``terms_*`` are the grouped loss terms (:func:`joint_terms`, same exponents), ``budget_*``
    (N,) the budget left after the interface (and, for the harmonic, conversion) losses and
    ``pulses`` G ``(bandwidth, edge)`` pairs or ``(bandwidth, edge, budget offset)`` triples
    (the offset [dB] is added to both budgets of that pulse, :func:`budget_offset_db`). The ceiling is the highest centre frequency whose
    broadband round-trip loss (layers and wall aberration,
    :func:`planner.physics.broadband.broadband_loss_db`) fits; a harmonic's transmit edge is
    half the pulse's edge (its echo returns at twice the transmit frequency). A pulse below
    :data:`planner.physics.broadband.NARROWBAND_BELOW` gets the single-frequency root.
    """
    n, g = budget_f.size, len(pulses)
    bw = np.array([p[0] for p in pulses], dtype=float)
    edge = np.array([p[1] for p in pulses], dtype=float)
    offset = np.array([p[2] if len(p) > 2 else 0.0 for p in pulses], dtype=float)
    k = np.concatenate([np.repeat(terms_f[0], g, axis=0), np.repeat(terms_h[0], g, axis=0)])
    budget = np.concatenate([np.repeat(budget_f, g), np.repeat(budget_h, g)])
    if offset.any():
        budget = budget + np.tile(offset, 2 * n)
    b = np.tile(bw, 2 * n)
    e = np.concatenate([np.tile(edge, n), np.tile(0.5 * edge, n)])
    broad = b >= broadband.NARROWBAND_BELOW
    out = np.empty(b.size)
    if not broad.all():
        narrow = ~broad
        out[narrow] = attenuation.solve_power_sum_mhz(k[narrow], terms_f[1], budget[narrow])
    if broad.any():
        out[broad] = ceiling.ceiling_rows(k[broad], terms_f[1], budget[broad], b[broad], e[broad])
    out = out.reshape(2, n, g)
    return out[0], out[1]


def probe_ceilings_mhz(terms_f, terms_h, budget_f, budget_h, probes):
    """Fundamental and harmonic reach ceilings of every probe, two arrays (N, P). [MHz]

    Each probe's own pulse (its bandwidth; :data:`RECEIVE_EDGE_MHZ`) is integrated with its own
    budget (:func:`budget_offset_db`), once per distinct pulse of the inventory (the default
    inventory has one).
    """
    pulses = pulse_groups(probes)
    sf, sh = ceilings_mhz(terms_f, terms_h, budget_f, budget_h, pulses)
    index = [pulses.index((p.bandwidth_fraction, RECEIVE_EDGE_MHZ, budget_offset_db(p)))
             for p in probes]
    return sf[:, index], sh[:, index]


def wall_sigma_ns(stacks: StackBatch) -> np.ndarray:
    """rms arrival-time fluctuation of each patient's body wall (fat and muscle). (N,) [ns]"""
    cols = np.array([lay.role in ABERRATING_ROLES for lay in stacks.layers], dtype=bool)
    wall_mm = 10.0 * np.where(cols[None, :], stacks.thickness_cm, 0.0).sum(axis=1)
    return np.asarray(aberration.arrival_time_rms_ns(wall_mm), dtype=float)
