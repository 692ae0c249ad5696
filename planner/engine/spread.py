"""Reach across patients like this one: how likely a frequency is to reach, and what would
narrow the doubt.

A plan's reach ceiling is a point estimate for the population-average patient of this
habitus. Three inputs are uncertain, and each is sampled (log-normal or normal, a fixed seed,
:data:`SAMPLES` draws shared by every plan so that the same inputs give the same plan):

``wall``
    The body wall at the window: the habitus model's 16th-84th centile band is +/-1 s.d. of a
    log-normal (``sigma = ln(high / low) / 2``; derived from the model's centile band,
    HabitusPracticeModel). A measured wall has no band; a measured depth fixes the path and
    is taken as knowing the wall too.
``attenuation``
    The path's attenuation coefficient about the tabulated averages, one factor for the whole
    path (log-normal, :data:`ATTENUATION_SIGMA_LOG`). Speed of sound does not enter the loss
    (it moves the displayed depth, :mod:`planner.engine.artefacts`), so it is not sampled.
``budget``
    The round-trip signal budget (normal, :data:`BUDGET_SD_DB`; :data:`QA_BUDGET_SD_DB` for a
    probe calibrated in a QA phantom).

Each draw's reach ceiling is solved with the engine's broadband model (the same terms as the
plan: layers and wall aberration, :func:`planner.engine.reach.grouped_terms`), all draws of all
rows in one vectorised call. The probability that a frequency reaches is the share of draws
whose ceiling is at or above it (non-increasing in frequency by construction); the robust
reach is the frequency that :data:`START_PROBABILITY` of the draws reach (their 20th
centile). The drivers are the inputs ranked by the share of the spread (variance of the log
ceiling) that vanishes when that input alone is known, estimated from the same draws as the
squared correlation of the log reach with that input's column (a first-order sensitivity
index; exact for a reach linear in the log inputs, such as one power-law layer).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from planner.physics.arrays import normal_quantile, quantile
from planner.provenance import Sourced
from planner.records import record

SAMPLES: int = 128
"""Draws per row (a fixed set, :func:`normals`). [-]"""

SEED: int = 20261203
"""Seed of the draws: every plan uses the same ones (deterministic plans)."""

INPUTS: tuple[str, ...] = ("wall", "attenuation", "budget")
"""The sampled inputs, in the order of the columns of :func:`normals`."""

START_PROBABILITY = Sourced(0.8, "CommonPractice", "common_practice",
                            "a start that reaches four patients in five like this one")
"""Share of patients the start frequency must reach. [-]"""

ATTENUATION_SIGMA_LOG = Sourced(
    0.262, "Duck1990", "from_memory",
    "ln 1.3: one s.d. of +/-30 %, the lower end of the +/-30-50 % inter-subject spread of "
    "soft-tissue attenuation the plan states")
"""Log-normal s.d. of a person's path attenuation about the tabulated average. [-]"""

BUDGET_SD_DB = Sourced(
    3.0, "CommonPractice", "common_practice",
    "sensitivity, preset and gain differ by a few dB between scanners; the default budget is "
    "not calibrated against a phantom")
"""s.d. of an uncalibrated round-trip budget. [dB]"""

QA_BUDGET_SD_DB = Sourced(
    1.4, "IEC61391DOP", "derived",
    "a depth of penetration read to about +/-0.4 cm in a 0.5 dB/cm/MHz phantom at 3.5 MHz: "
    "2 x 0.5 x 3.5 x 0.4 = 1.4 dB")
"""s.d. of a budget derived from a QA phantom measurement. [dB]"""

ACTIONS: dict[str, str] = {
    "wall": "measuring the wall (or the skin-to-target depth) at the window",
    "attenuation": "a prior exam's fade depth (--prior-frequency-mhz, --prior-fade-cm)",
    "budget": "a phantom QA log for the probe (--qa)",
}
"""What would pin each input down, as the drivers say it."""


@lru_cache(maxsize=4)
def normals(samples: int = SAMPLES, seed: int = SEED) -> np.ndarray:
    """Standard normal draws (samples, len(INPUTS)), stratified: each column holds the normal
    quantiles at (i + 1/2) / samples (Latin hypercube), so every column's mean is 0 and its
    spread that of the normal. The columns' orderings start from the standard library's
    seeded generator (not ``numpy.random``, whose import, about 9 ms, every plan would pay
    at start-up) and are then re-paired by :func:`decorrelate`, so that the inputs are
    independent in the sample as they are in the model. [-]"""
    import random
    quantiles = normal_quantile((np.arange(samples) + 0.5) / samples)
    rng = random.Random(seed)
    out = decorrelate(np.stack([quantiles[rng.sample(range(samples), samples)]
                                for _ in INPUTS], axis=1))
    out.setflags(write=False)
    return out


def decorrelate(z: np.ndarray, passes: int = 4) -> np.ndarray:
    """Re-pair the columns of ``z`` (S, K) so that their sample correlations are near zero,
    keeping each column's values (its Latin-hypercube strata): the restricted pairing of
    Iman & Conover (1982). Each pass whitens the scores with the inverse Cholesky factor of
    their correlation matrix and re-orders every column of ``z`` to the ranks of the
    whitened column.

    Random pairing leaves correlations of about 1 / sqrt(S) (0.09 for 128 draws). Removing
    them makes the spread of a reach that depends on a sum of inputs nearly exact (the s.d.
    of ln f of a two-input closed form within 0.4 % over 40 seeds) and keeps one input's
    share of it from leaking into another's; the median and the shares still scatter by
    about 2 % between seeds, which pairing does not change (measured). [-]"""
    values = np.sort(z, axis=0)
    out = np.array(z, dtype=float)
    for _ in range(passes):
        corr = np.corrcoef(out, rowvar=False)
        try:
            chol = np.linalg.cholesky(corr)
        except np.linalg.LinAlgError:
            break
        white = out @ np.linalg.inv(chol).T
        ranks = np.argsort(np.argsort(white, axis=0), axis=0)
        out = np.take_along_axis(values, ranks, axis=0)
    return out


def reach_ceilings_mhz(k, y, budget, bandwidth, edge) -> np.ndarray:
    """Reach ceilings of rows of grouped loss terms ``k`` (M, U), ``y`` (U,), each row's budget
    and pulse (M,). [MHz]"""
    from planner.physics import broadband, ceiling
    from planner.physics.attenuation import solve_power_sum_mhz
    k = np.atleast_2d(np.asarray(k, dtype=float))
    budget = np.atleast_1d(np.asarray(budget, dtype=float))
    b = np.broadcast_to(np.asarray(bandwidth, dtype=float), budget.shape)
    e = np.broadcast_to(np.asarray(edge, dtype=float), budget.shape)
    out = np.empty(budget.shape)
    narrow = b < broadband.NARROWBAND_BELOW
    if narrow.any():
        out[narrow] = solve_power_sum_mhz(k[narrow], y, budget[narrow])
    wide = np.nonzero(~narrow)[0]
    # In blocks small enough for the ceiling table (ceiling.ceiling_rows reads a table for a
    # few rows and iterates for many, two solvers that agree to their tolerance only): one
    # plan's draws and a sweep's many rows are then solved alike, row by row, so that a
    # plan and the same patient's sweep row give the same rounded start.
    block = max(1, ceiling.GRID_MAX_VALUES // ceiling.GRID_POINTS)
    for first in range(0, wide.size, block):
        rows = wide[first:first + block]
        out[rows] = ceiling.ceiling_rows(k[rows], y, budget[rows], b[rows], e[rows])
    return out


@record(slots=False)
class SpreadInputs:
    """N rows of one window's layers and the spread of their uncertain inputs.

    ``thickness_cm`` (N, n), ``alpha`` and ``exponent`` (n,) the layers; ``wall_cols`` and
    ``aberrating_cols`` (n,) the layers of the body wall and those of its phase screen;
    ``wall_sigma_log`` (N,) [-]; ``budget_db`` (N,) the budget less the interface losses [dB];
    ``budget_sd_db`` (N,) [dB]; ``bandwidth`` and ``edge`` (N,) each row's pulse.
    """

    thickness_cm: np.ndarray
    alpha: np.ndarray
    exponent: np.ndarray
    wall_cols: np.ndarray
    aberrating_cols: np.ndarray
    wall_sigma_log: np.ndarray
    budget_db: np.ndarray
    budget_sd_db: np.ndarray
    bandwidth: np.ndarray
    edge: np.ndarray


def sampled_ceilings_mhz(inputs: SpreadInputs, z: np.ndarray | None = None) -> np.ndarray:
    """Reach ceilings of every draw of every row (N, S), for the draws ``z`` (S, len(INPUTS);
    default :func:`normals`). [MHz]"""
    from planner.engine.reach import grouped_terms
    from planner.physics import aberration
    z = normals() if z is None else z
    t = np.atleast_2d(np.asarray(inputs.thickness_cm, dtype=float))
    n_rows, s = t.shape[0], z.shape[0]
    wall_factor = np.exp(np.asarray(inputs.wall_sigma_log, dtype=float)[:, None] * z[None, :, 0])
    t_s = t[:, None, :] * np.where(inputs.wall_cols[None, None, :], wall_factor[..., None], 1.0)
    att = np.exp(ATTENUATION_SIGMA_LOG.value * z[:, 1])                           # (S,)
    alpha_s = np.broadcast_to(inputs.alpha[None, None, :] * att[None, :, None], t_s.shape)
    screen_mm = 10.0 * np.where(inputs.aberrating_cols[None, None, :], t_s, 0.0).sum(axis=2)
    sigma_ns = aberration.arrival_time_rms_ns(screen_mm)
    arrays = {"thickness_cm": t_s.reshape(n_rows * s, -1),
              "attenuation_db_per_cm_mhz": alpha_s.reshape(n_rows * s, -1),
              "attenuation_exponent": inputs.exponent}
    k, y = grouped_terms(arrays, sigma_ns.reshape(-1))
    budget = (np.asarray(inputs.budget_db, dtype=float)[:, None]
              + np.asarray(inputs.budget_sd_db, dtype=float)[:, None] * z[None, :, 2]).reshape(-1)
    ceilings = reach_ceilings_mhz(k, y, budget, np.repeat(inputs.bandwidth, s),
                                  np.repeat(inputs.edge, s))
    return ceilings.reshape(n_rows, s)


def robust_reach_mhz(ceilings: np.ndarray) -> np.ndarray:
    """The frequency that :data:`START_PROBABILITY` of the draws reach, per row. [MHz]"""
    return quantile(ceilings, 1.0 - START_PROBABILITY.value, axis=-1)


def probability_reaching(ceilings: np.ndarray, frequencies_mhz) -> np.ndarray:
    """Share of the draws (last axis) whose ceiling is at or above each frequency. [-]"""
    f = np.asarray(frequencies_mhz, dtype=float)
    p = (np.asarray(ceilings)[..., None, :] >= f[:, None]).mean(axis=-1)
    return np.minimum.accumulate(p, axis=-1)


def spread_range_mhz(ceilings: np.ndarray) -> tuple[float, float]:
    """The 10th-90th centile of one row's draws. [MHz]"""
    lo, hi = quantile(ceilings, [0.1, 0.9])
    return float(lo), float(hi)


def explained_share(full: np.ndarray, fixed: np.ndarray) -> float:
    """Share of the variance of the log ceiling that vanishes with one input known (``fixed``:
    the draws with that input held, :func:`plan_draws`). [-]"""
    v_full = float(np.var(np.log(full)))
    if v_full <= 0.0:
        return 0.0
    return float(np.clip(1.0 - np.var(np.log(fixed)) / v_full, 0.0, 1.0))


def wall_prefix(thickness_cm, wall_cm: float) -> np.ndarray:
    """(n,) True for the leading layers that make up the body wall (their sum is ``wall_cm``)."""
    t = np.asarray(thickness_cm, dtype=float)
    edges = np.cumsum(t)
    count = int(np.searchsorted(edges, float(wall_cm) - 1e-6) + 1) if wall_cm > 0 else 0
    return np.arange(t.size) < min(count, t.size)


def wall_sigma_log(wall_low_cm, wall_high_cm, depth_known: bool) -> np.ndarray:
    """Log-normal s.d. of the wall from its 16th-84th centile band (0 for a measured wall, or
    when a measured depth fixes the path). [-]"""
    lo = np.asarray(wall_low_cm, dtype=float)
    hi = np.asarray(wall_high_cm, dtype=float)
    ok = (lo > 0) & (hi > lo) & (not depth_known)
    return np.where(ok, 0.5 * np.log(np.where(ok, hi, 1.0) / np.where(ok, lo, 1.0)), 0.0)


def budget_sd_db(probe) -> float:
    """s.d. of the probe's budget: the scatter of its own QA log when that set it
    (``Probe.budget_sd_db``, :mod:`planner.engine.qa_budget`), :data:`QA_BUDGET_SD_DB` when a QA
    phantom calibrated it otherwise, :data:`BUDGET_SD_DB` without QA. [dB]"""
    if probe.budget_db is None:
        return BUDGET_SD_DB.value
    return probe.budget_sd_db if probe.budget_sd_db is not None else QA_BUDGET_SD_DB.value


def assessment_inputs(assessment, probe, depth_known: bool) -> SpreadInputs:
    """The spread inputs of a plan's chosen window and probe (one row)."""
    from planner.engine.reach import ABERRATING_ROLES
    stack, arr = assessment.stack, assessment.arrays
    t = np.asarray(arr["thickness_cm"], dtype=float)
    lo, hi = stack.wall_band_cm
    return SpreadInputs(
        t[None, :], np.asarray(arr["attenuation_db_per_cm_mhz"], dtype=float),
        np.asarray(arr["attenuation_exponent"], dtype=float), wall_prefix(t, stack.wall_cm),
        np.array([lay.role in ABERRATING_ROLES for lay in stack.layers], dtype=bool),
        np.atleast_1d(wall_sigma_log(lo, hi, depth_known)),
        np.array([assessment.budget_db - assessment.interface_loss_db]),
        np.array([budget_sd_db(probe)]), np.array([assessment.bandwidth_fraction]),
        np.array([assessment.low_edge_mhz]))


def plan_draws(inputs: SpreadInputs) -> tuple[np.ndarray, dict[str, np.ndarray]]:
    """One row's draws (S,) and, for each input, the draws as they would be with that input
    known: the log reach less its linear dependence on that input's draws (regression on the
    stratified, independent columns; for a reach linear in the log inputs, such as one
    power-law layer, this is exact). One solve of S rows. [MHz]"""
    z = normals()
    ceilings = sampled_ceilings_mhz(inputs, z=z)[0]
    log_c = np.log(ceilings)
    centred = log_c - log_c.mean()
    known = {}
    for i, name in enumerate(INPUTS):
        zi = z[:, i] - z[:, i].mean()
        var = float(zi @ zi)
        slope = float(centred @ zi) / var if var > 0 else 0.0
        known[name] = np.exp(log_c - slope * zi)
    return ceilings, known


INPUT_WORDS: dict[str, str] = {"wall": "the body wall", "attenuation": "the path's attenuation",
                               "budget": "the scanner's signal budget"}
"""The sampled inputs in words."""

NARROWING_MHZ: float = 0.5
"""A driver whose knowledge narrows the reach's 10th-90th centile by at least this much makes
the spread a main finding (otherwise it goes to More). [MHz]"""

COLLAPSED_MHZ: float = 0.1
"""A reach whose 10th-90th centile is narrower than this has no spread worth naming: nearly
every patient is reached up to the probe's top (derived: the plans' 0.1 MHz rounding). [MHz]"""


def collapsed(driver) -> bool:
    """True when a driver's reach range is narrower than :data:`COLLAPSED_MHZ`."""
    lo, hi = driver.reach_range_mhz
    return hi - lo < COLLAPSED_MHZ


def top_driver(band):
    """The input most of the reach's doubt comes from (the band's first driver), or None when
    it explains nothing or the reach has collapsed to the probe's top."""
    top = band.drivers[0] if band.drivers else None
    return None if top is None or top.explains <= 0 or collapsed(top) else top


def spread_finding(band):
    """The reach across patients in words: what the start and the band's top reach, and the
    input that would narrow the doubt most (a :class:`planner.findings.Finding`)."""
    from planner.findings import Finding
    top = band.drivers[0] if band.drivers else None
    lo, hi = top.reach_range_mhz if top else (band.low, band.high)
    message = (f"The start, {band.start:.1f} MHz, reaches about {100 * band.start_probability:.0f} % "
               f"of patients like this one and the band's top, {band.high:.1f} MHz, about "
               f"{100 * band.top_probability:.0f} %")
    narrows = 0.0
    if hi - lo < COLLAPSED_MHZ:
        message += ": nearly every patient like this one is reached up to the probe's top."
    else:
        message += f" (reach {lo:.1f}-{hi:.1f} MHz from the 10th to the 90th centile)."
        if top is not None and top.explains > 0:
            k_lo, k_hi = top.known_range_mhz
            narrows = (hi - lo) - (k_hi - k_lo)
            message += (f" {INPUT_WORDS[top.input].capitalize()} explains most of the spread "
                        f"({100 * top.explains:.0f} %): {top.action} would narrow it to "
                        + (f"{k_lo:.1f}-{k_hi:.1f} MHz." if k_hi - k_lo >= 0.05
                           else f"{k_lo:.1f} MHz."))
    values = {"start_probability": band.start_probability, "top_probability": band.top_probability,
              "reach_range_mhz": [lo, hi], "start_median_mhz": band.start_median,
              "drivers": {d.input: d.explains for d in band.drivers}, "samples": SAMPLES,
              "narrows_mhz": round(narrows, 2), "start_basis": band.start_basis}
    return Finding(
        "band.reach_spread", "info", "Reach across patients like this one", message, values,
        ("HabitusPracticeModel", "Duck1990", "IEC61391DOP"),
        f"{SAMPLES} draws (fixed seed) of the wall (its 16th-84th centile band), the path's "
        f"attenuation (log-normal s.d. {ATTENUATION_SIGMA_LOG.value:g}) and the budget (s.d. "
        f"{BUDGET_SD_DB.value:g} dB, {QA_BUDGET_SD_DB.value:g} dB after phantom QA); each draw's "
        "reach is solved with the plan's broadband model. A driver's share is the part of the "
        "spread of the log reach that vanishes when that input alone is known.",
        relevance="more")       # graded by planner.engine.relevance (_reach_spread)


SETTLED_PROBABILITY: float = 0.9
"""A start that the wall, the exam's usual start or the probe set, and that at least this share
of the draws reach, is settled: the doubt does not change what to do, so the spread goes to
More (common practice). [-]"""
