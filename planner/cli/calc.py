"""``scanplan calc``: quick calculations for practitioners and scripts.

numpy and the physics load only when a calculation runs, not when the parser is built.
"""

from __future__ import annotations

import argparse
import math
from typing import Any

from planner.cli.common import emit_json, finite_float
from planner.errors import InputError
from planner.numbers import NumberError, parse_number

__all__ = ["LIMITS", "doppler_result", "interface_result", "parse_layers", "path_result",
           "register", "tilt_result"]

ANGLE_ERROR_DEG = 5.0
"""Angle uncertainty used for the velocity-error figures. [deg]"""

LIMITS = {"--frequency-mhz": (0.01, 100.0), "--bandwidth-fraction": (0.0, 1.5),
          "--aperture-mm": (0.1, 200.0), "--focus-cm": (0.01, 100.0), "--depth-cm": (0.01, 100.0), "thickness": (1e-4, 100.0),
          "--velocity-cm-s": (-2000.0, 2000.0), "--z1": (1e-5, 100.0), "--z2": (1e-5, 100.0),
          "--c1": (1.0, 20000.0), "--c2": (1.0, 20000.0)}
"""Plausibility ranges of the quick calculations (inclusive): far wider than any diagnostic
use, they only keep the arithmetic finite (common practice)."""


def _in_range(option: str, value: float | None) -> None:
    if value is None:
        return
    low, high = LIMITS[option]
    if not low <= value <= high:
        raise InputError(f"{option} must be between {low:g} and {high:g}, got {value:g}")


def register(sub: argparse._SubParsersAction) -> None:
    """Add ``calc interface``, ``calc path``, ``calc tilt`` and ``calc doppler`` to ``sub``."""
    calc = sub.add_parser("calc", help="quick physics calculations")
    calc_sub = calc.add_subparsers(dest="calc_command", required=True)

    p = calc_sub.add_parser("interface", help="reflection and refraction at an interface")
    p.add_argument("--from", dest="from_tissue", metavar="TISSUE")
    p.add_argument("--to", dest="to_tissue", metavar="TISSUE")
    p.add_argument("--z1", type=finite_float, help="impedance of the first medium [MRayl]")
    p.add_argument("--z2", type=finite_float, help="impedance of the second medium [MRayl]")
    p.add_argument("--c1", type=finite_float, help="speed of sound in the first medium [m/s]")
    p.add_argument("--c2", type=finite_float, help="speed of sound in the second medium [m/s]")
    p.add_argument("--angle-deg", type=finite_float, default=0.0,
                   help="incidence angle from the normal [deg] (default 0)")
    p.add_argument("--json", action="store_true")
    p.set_defaults(func=run_interface)

    p = calc_sub.add_parser("path", help="round-trip loss and depth error through layers")
    p.add_argument("--layers", required=True, metavar="TISSUE:CM,...",
                   help="layers from the skin, e.g. fat:3,liver:10 (thickness in cm)")
    p.add_argument("--frequency-mhz", type=finite_float, required=True)
    p.add_argument("--bandwidth-fraction", type=finite_float, default=0.0, metavar="B",
                   help="fractional -6 dB bandwidth of the pulse-echo spectrum, e.g. 0.6 "
                        "(0 or absent: a single frequency)")
    p.add_argument("--json", action="store_true")
    p.set_defaults(func=run_path)

    p = calc_sub.add_parser("tilt", help="specular tilt tolerance of a focused aperture (wave model)")
    p.add_argument("--aperture-mm", type=finite_float, required=True,
                   help="width of the 1-D aperture (scan plane: active aperture; elevation: lens) [mm]")
    p.add_argument("--depth-cm", type=finite_float, required=True, help="depth of the mirror [cm]")
    p.add_argument("--frequency-mhz", type=finite_float, required=True)
    p.add_argument("--focus-cm", type=finite_float,
                   help="fixed focus, e.g. the elevation lens [cm] (default: focused at the depth)")
    p.add_argument("--json", action="store_true")
    p.set_defaults(func=run_tilt)

    p = calc_sub.add_parser("doppler", help="Nyquist limit, shift and angle error at a depth")
    p.add_argument("--depth-cm", type=finite_float, required=True)
    p.add_argument("--frequency-mhz", type=finite_float, required=True)
    p.add_argument("--angle-deg", type=finite_float, required=True, help="beam-to-flow angle [deg]")
    p.add_argument("--velocity-cm-s", type=finite_float)
    p.add_argument("--json", action="store_true")
    p.set_defaults(func=run_doppler)


def _tissue(name: str):
    from planner.physics.tissues import get_tissue
    try:
        return get_tissue(name)
    except ValueError as exc:
        raise InputError(str(exc)) from None


def _angle(value: float, upper: float = 90.0) -> float:
    if not 0.0 <= value <= upper:
        raise InputError(f"--angle-deg must be between 0 and {upper:g} degrees, got {value:g}")
    return value


def _nullable(x) -> float | None:
    x = float(x)
    return None if math.isnan(x) else x


def interface_result(z1, z2, c1, c2, angle_deg) -> dict:
    """The quick interface calculation as a JSON-ready dict."""
    from planner.physics import interfaces
    if c1 is None or c2 is None:
        r = float(interfaces.intensity_reflection_normal(z1, z2)) if angle_deg == 0 else None
        if r is None:
            raise InputError("an oblique angle needs the speeds --c1 and --c2 (or tissues)")
        return {"reflection_intensity": r, "transmission_intensity": 1.0 - r,
                "transmitted_angle_deg": 0.0, "critical_angle_deg": None}
    r = float(interfaces.intensity_reflection_oblique(z1, z2, c1, c2, angle_deg))
    return {"reflection_intensity": r, "transmission_intensity": 1.0 - r,
            "transmitted_angle_deg": _nullable(interfaces.transmitted_angle_deg(angle_deg, c1, c2)),
            "critical_angle_deg": _nullable(interfaces.critical_angle_deg(c1, c2))}


def run_interface(args) -> int:
    _angle(args.angle_deg)
    if args.from_tissue or args.to_tissue:
        if not (args.from_tissue and args.to_tissue):
            raise InputError("give both --from and --to tissues")
        if any(v is not None for v in (args.z1, args.z2, args.c1, args.c2)):
            raise InputError("give tissues (--from/--to) or values (--z1/--z2/--c1/--c2), not both")
        t1, t2 = _tissue(args.from_tissue), _tissue(args.to_tissue)
        z1, z2, c1, c2 = t1.impedance_mrayl, t2.impedance_mrayl, t1.speed_m_per_s, t2.speed_m_per_s
        names = (t1.name, t2.name)
    else:
        if args.z1 is None or args.z2 is None:
            raise InputError("give --from and --to tissues, or --z1 and --z2 (MRayl)")
        if (args.c1 is None) != (args.c2 is None):
            raise InputError("give both --c1 and --c2, or neither")
        for name, value in (("--z1", args.z1), ("--z2", args.z2), ("--c1", args.c1), ("--c2", args.c2)):
            _in_range(name, value)
        z1, z2, c1, c2 = args.z1, args.z2, args.c1, args.c2
        names = ("medium 1", "medium 2")
    result = interface_result(z1, z2, c1, c2, args.angle_deg)
    if args.json:
        emit_json(result)
        return 0
    t_angle = result["transmitted_angle_deg"]
    crit = result["critical_angle_deg"]
    print(f"{names[0]} -> {names[1]} at {args.angle_deg:g} deg from the normal")
    print(f"  reflected intensity   {result['reflection_intensity']:.4f} "
          f"({10 * math.log10(max(result['reflection_intensity'], 1e-12)):.1f} dB)")
    print(f"  transmitted intensity {result['transmission_intensity']:.4f}")
    print(f"  transmitted angle     {'none (total reflection)' if t_angle is None else f'{t_angle:.1f} deg'}")
    print(f"  critical angle        {'none (second medium not faster)' if crit is None else f'{crit:.1f} deg'}")
    return 0


def parse_layers(text: str) -> list[tuple[str, float]]:
    """Parse ``tissue:cm,tissue:cm`` into (tissue id, thickness) pairs."""
    layers = []
    for item in text.split(","):
        name, sep, thick = item.strip().partition(":")
        if not sep or not name:
            raise InputError(f"layer {item.strip()!r} must be TISSUE:CM, e.g. fat:3")
        _tissue(name)
        try:
            value = parse_number(thick)
        except NumberError as exc:
            raise InputError(f"layer {item.strip()!r}: thickness must be a number of cm "
                             f"({exc.message})") from None
        low, high = LIMITS["thickness"]
        if not math.isfinite(value) or not low <= value <= high:
            raise InputError(f"layer {item.strip()!r} in --layers: thickness must be between "
                             f"{low:g} and {high:g} cm")
        layers.append((name, value))
    return layers


def path_result(layers: list[tuple[str, float]], frequency_mhz: float,
                bandwidth_fraction: float = 0.0) -> dict:
    """The quick path calculation as a JSON-ready dict.

    With a bandwidth, ``round_trip_loss_db`` is the broadband (Gaussian pulse) energy loss
    through the layers plus the interface losses, and ``received_centre_mhz`` the downshifted
    centre frequency of the echo (:mod:`planner.physics.broadband`); per-layer losses stay
    at the centre frequency.
    """
    import numpy as np

    from planner.physics import attenuation, broadband, sound_speed
    from planner.physics.tissues import get_tissue
    _in_range("--frequency-mhz", frequency_mhz)
    _in_range("--bandwidth-fraction", bandwidth_fraction)
    tissues = [get_tissue(name) for name, _ in layers]
    d = np.array([t for _, t in layers])
    c = np.array([t.speed_m_per_s for t in tissues])
    a0 = np.array([t.attenuation_db_per_cm_mhz for t in tissues])
    y = np.array([t.attenuation_exponent for t in tissues])
    z = np.array([t.impedance_mrayl for t in tissues])
    per_layer = attenuation.round_trip_attenuation_db(d, frequency_mhz, a0, y)
    iface = float(attenuation.interface_round_trip_loss_db(z))
    broad, centre = broadband.broadband_loss_db(2.0 * a0 * d, y, frequency_mhz, bandwidth_fraction)
    total = float(broad) + iface
    shown = float(sound_speed.displayed_depth_cm(d, c))
    return {
        "frequency_mhz": frequency_mhz,
        "bandwidth_fraction": bandwidth_fraction,
        "round_trip_loss_db": total,
        "narrowband_loss_db": float(per_layer.sum()) + iface,
        "received_centre_mhz": float(centre),
        "interface_loss_db": iface,
        "true_depth_cm": float(d.sum()), "displayed_depth_cm": shown,
        "depth_error_mm": 10.0 * (shown - float(d.sum())),
        "layers": [{"tissue": t.id, "thickness_cm": float(th), "speed_m_per_s": t.speed_m_per_s,
                    "attenuation_db_per_cm_mhz": t.attenuation_db_per_cm_mhz,
                    "attenuation_exponent": t.attenuation_exponent, "loss_db": float(loss)}
                   for t, th, loss in zip(tissues, d, per_layer)],
    }


def run_path(args) -> int:
    result = path_result(parse_layers(args.layers), args.frequency_mhz, args.bandwidth_fraction)
    if args.json:
        emit_json(result)
        return 0
    pulse = (f" ({100 * args.bandwidth_fraction:g} % bandwidth pulse)" if args.bandwidth_fraction else "")
    print(f"Round trip at {args.frequency_mhz:g} MHz{pulse}")
    for lay in result["layers"]:
        print(f"  {lay['tissue']:<16} {lay['thickness_cm']:6.2f} cm  {lay['speed_m_per_s']:6.0f} m/s  "
              f"{lay['attenuation_db_per_cm_mhz']:5.2f} dB/cm/MHz  {lay['loss_db']:6.1f} dB")
    print(f"  interfaces {result['interface_loss_db']:.2f} dB; total {result['round_trip_loss_db']:.1f} dB")
    if args.bandwidth_fraction:
        print(f"  single-frequency total {result['narrowband_loss_db']:.1f} dB; echo centre "
              f"{result['received_centre_mhz']:.2f} MHz (shifted down from {args.frequency_mhz:g})")
    print(f"  true depth {result['true_depth_cm']:.2f} cm, displayed {result['displayed_depth_cm']:.2f} cm "
          f"(error {result['depth_error_mm']:+.1f} mm at 1540 m/s)")
    return 0


def tilt_result(aperture_mm: float, depth_cm: float, frequency_mhz: float,
                focus_cm: float | None) -> dict:
    """The quick tilt calculation as a JSON-ready dict (:mod:`planner.physics.specular`)."""
    from planner.physics import beam, specular
    for option, value in (("--aperture-mm", aperture_mm), ("--depth-cm", depth_cm),
                          ("--frequency-mhz", frequency_mhz), ("--focus-cm", focus_cm)):
        _in_range(option, value)
    tol = specular.specular_tolerance_wave_deg(aperture_mm, depth_cm, frequency_mhz, focus_cm)
    return {"aperture_mm": aperture_mm, "depth_cm": depth_cm, "frequency_mhz": frequency_mhz,
            "focus_cm": focus_cm, "tolerance_deg": tol,
            "geometric_tolerance_deg": float(beam.specular_tolerance_deg(aperture_mm / 2.0, depth_cm))}


def run_tilt(args) -> int:
    result = tilt_result(args.aperture_mm, args.depth_cm, args.frequency_mhz, args.focus_cm)
    if args.json:
        emit_json(result)
        return 0
    focus = f"focus {args.focus_cm:g} cm" if args.focus_cm is not None else "focused at the depth"
    print(f"Flat mirror at {args.depth_cm:g} cm, {args.aperture_mm:g} mm aperture ({focus}), "
          f"{args.frequency_mhz:g} MHz")
    print(f"  echo halves at a tilt of {result['tolerance_deg']:.1f} deg (wave model)")
    print(f"  geometric rule 0.5 atan(a/z): {result['geometric_tolerance_deg']:.1f} deg")
    return 0


def doppler_result(depth_cm: float, frequency_mhz: float, angle_deg: float,
                   velocity_cm_s: float | None) -> dict:
    """The quick Doppler calculation as a JSON-ready dict."""
    from planner.physics import doppler
    _in_range("--depth-cm", depth_cm)
    _in_range("--frequency-mhz", frequency_mhz)
    _in_range("--velocity-cm-s", velocity_cm_s)
    if not 0 <= angle_deg < 90:
        raise InputError(f"--angle-deg must be from 0 to below 90 degrees for Doppler, got {angle_deg:g}")
    prf = float(doppler.prf_max_hz(depth_cm))
    plus, minus = (float(v) for v in doppler.velocity_error_fraction(angle_deg, [ANGLE_ERROR_DEG,
                                                                                 -ANGLE_ERROR_DEG]))
    out: dict[str, Any] = {
        "depth_cm": depth_cm, "frequency_mhz": frequency_mhz, "angle_deg": angle_deg,
        "prf_max_hz": prf,
        "v_max_cm_s": float(doppler.nyquist_velocity_cm_s(prf, frequency_mhz, angle_deg)),
        "angle_error_deg": ANGLE_ERROR_DEG,
        "velocity_error_percent": {"plus_5_deg": None if math.isnan(plus) else 100 * plus,
                                   "minus_5_deg": None if math.isnan(minus) else 100 * minus}}
    if velocity_cm_s is not None:
        out["velocity_cm_s"] = velocity_cm_s
        out["doppler_shift_hz"] = float(doppler.doppler_shift_hz(frequency_mhz, velocity_cm_s, angle_deg))
        out["aliasing_expected"] = abs(velocity_cm_s) > out["v_max_cm_s"]
    return out


def run_doppler(args) -> int:
    result = doppler_result(args.depth_cm, args.frequency_mhz, args.angle_deg, args.velocity_cm_s)
    if args.json:
        emit_json(result)
        return 0
    err = result["velocity_error_percent"]
    print(f"Doppler at {args.depth_cm:g} cm, {args.frequency_mhz:g} MHz, {args.angle_deg:g} deg")
    print(f"  range-limited PRF  {result['prf_max_hz']:.0f} Hz")
    print(f"  Nyquist velocity   {result['v_max_cm_s']:.1f} cm/s")
    if "doppler_shift_hz" in result:
        print(f"  Doppler shift      {result['doppler_shift_hz']:.0f} Hz for {args.velocity_cm_s:g} cm/s"
              + ("  -> ALIASING expected" if result["aliasing_expected"] else ""))
    fmt = lambda v: "n/a" if v is None else f"{v:+.1f} %"
    print(f"  angle error +/-5 deg -> velocity {fmt(err['plus_5_deg'])} / {fmt(err['minus_5_deg'])}")
    if args.angle_deg > 60:
        print("  note: above 60 deg the velocity error grows fast; keep <= 60 deg for velocities")
    return 0
