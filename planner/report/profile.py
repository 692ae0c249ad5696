"""Round-trip loss against depth for the depth plots: read from the plan's engine curves.

The engine fixes the curves of a plan (:class:`planner.engine.curves.DepthCurves`: the chosen
window's layers, the band's ends and one frequency above it, the budget); the terminal UI's
depth view and the HTML plot both draw :func:`plan_loss_profile`, so they show the same
frequencies. The physics (``L(z, f) = 2 sum alpha0_i f^y_i min(d_i, max(0, z - z_i))`` plus
the interface losses; Kremkau2015, Szabo2004 ch. 4) lives in :mod:`planner.engine.curves`.
"""

from __future__ import annotations

from typing import Sequence

from planner.engine.curves import (PROFILE_POINTS, LayerAcoustics, LossProfile, loss_profile,
                                   stack_acoustics)
from planner.engine.model import Plan, PlanLayer

__all__ = ["LayerAcoustics", "LossProfile", "candidate_frequencies_mhz", "layer_acoustics",
           "loss_profile", "plan_budget_db", "plan_loss_profile", "stack_acoustics"]


def layer_acoustics(layer: PlanLayer) -> LayerAcoustics:
    """Acoustic properties of one layer of ``plan.layers``."""
    return LayerAcoustics(layer.label or layer.tissue, float(layer.thickness_cm),
                          float(layer.attenuation_db_per_cm_mhz), float(layer.attenuation_exponent),
                          float(layer.impedance_mrayl))


def plan_budget_db(plan: Plan) -> float:
    """The signal budget the plan used. [dB]"""
    return float(plan.budget_db)


def candidate_frequencies_mhz(plan: Plan) -> tuple[float, ...]:
    """The frequencies the engine chose for the plan's curves (empty without curves). [MHz]"""
    return plan.depth_curves.frequencies_mhz if plan.depth_curves is not None else ()


def plan_loss_profile(plan: Plan, frequencies_mhz: Sequence[float] | None = None,
                      points: int = PROFILE_POINTS) -> LossProfile:
    """The loss profile along a plan's chosen window.

    Parameters
    ----------
    plan : Plan
    frequencies_mhz : sequence of float, optional
        Other frequencies than the plan's curves (the same layers and budget). [MHz]
    points : int
        Number of evenly spaced sample depths.

    Raises
    ------
    ValueError
        When the plan has no curves (a stack of no depth) and no frequencies are given.
    """
    curves = plan.depth_curves
    if frequencies_mhz is None:
        if curves is None:
            raise ValueError("the plan has no depth curves")
        return curves.profile(points)
    if curves is not None:       # the engine's layers and pulse (broadband, wall aberration)
        return loss_profile(curves.layers, frequencies_mhz, budget_db=plan_budget_db(plan),
                            points=points, bandwidth_fraction=curves.bandwidth_fraction,
                            low_edge_mhz=curves.low_edge_mhz)
    layers = [layer_acoustics(layer) for layer in plan.layers]
    return loss_profile(layers, frequencies_mhz, budget_db=plan_budget_db(plan), points=points)
