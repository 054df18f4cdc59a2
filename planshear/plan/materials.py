"""Reads the diaphragm's own rigidity from the plan file: ``[diaphragm] material`` and
``[[diaphragm.zone]] material`` (wood panel, steel deck, concrete or custom membrane
rigidities) and the axial rigidity of the diaphragm's edge bars, ``[diaphragm] chord_EA``
and ``collector_EA``.
"""

from __future__ import annotations

import difflib
import math

from ..units import FORCE, LENGTH, LINE_LOAD, PRESSURE, STIFFNESS
from .context import Context
from .model import Material

MATERIAL_KINDS = ("wood-panel", "steel-deck", "concrete", "custom")

#: Default ratio of the sheathing's axial rigidity Et to its shear rigidity Gt for the
#: wood-panel and steel-deck presets. Kept small on purpose: the chords carry the
#: diaphragm's flexure (as the SDPWS deflection equation assumes), while a non-zero
#: axial rigidity keeps the membrane from having zero-energy stretching modes.
DEFAULT_AXIAL_RATIO = 0.1
#: Default cracked-section factor for concrete diaphragms (0.25 of gross for
#: nonprestressed slabs; see VALIDATION.md 7.3, an ASCE-published effective-stiffness table).
DEFAULT_CRACKED = 0.25

#: The nail-slip term of the 4-term diaphragm deflection, 0.188·L·en with L in ft (IBC 2021
#: Eq. 23-1; the constant assumes the equation's uniform fastening), per metre of span.
SLIP_CONSTANT = 0.188 / 0.3048


def material(ctx: Context, raw: dict, where: str) -> Material | None:
    """The membrane rigidities of a ``material`` table at ``where`` (e.g.
    ``diaphragm.material``), or None (problem recorded)."""
    kind = raw["kind"]
    allowed = {
        "wood-panel": (set(), {"Ga", "Gt", "en", "at_unit_shear", "axial_ratio"}),
        "steel-deck": ({"G_prime"}, {"axial_ratio"}),
        "concrete": ({"E", "thickness"}, {"nu", "cracked"}),
        "custom": ({"Et_x", "Et_y", "Gt"}, {"nu"}),
    }
    if kind not in allowed:
        close = difflib.get_close_matches(kind, MATERIAL_KINDS, n=1)
        ctx.problem(where, f'unknown material kind "{kind}"; use one of {", ".join(MATERIAL_KINDS)}' + (f' (did you mean "{close[0]}"?)' if close else ""))
        return None
    required, optional = allowed[kind]
    ok = True
    for key in sorted(required - set(raw)):
        ctx.problem(where, f'a {kind} material needs "{key}"; add it')
        ok = False
    for key in sorted(set(raw) - required - optional - {"kind"}):
        ctx.problem(where, f'"{key}" does not apply to a {kind} material; remove it (fields: {", ".join(sorted(required | optional))})')
        ok = False
    if not ok:
        return None
    nu = float(raw.get("nu", 0.2 if kind == "concrete" else 0.0))
    if not (-1.0 < nu < 0.5):
        ctx.problem(where + ".nu", f"Poisson's ratio must lie between -1 and 0.5, got {nu}")
        return None
    slip = ""
    if kind == "wood-panel" and "Ga" not in raw:
        given = sorted({"Gt", "en", "at_unit_shear"} & set(raw))
        if len(given) != 3:
            ctx.problem(where, 'a wood-panel material needs "Ga" (SDPWS apparent shear stiffness, kip/in), or "Gt", '
                        '"en" and "at_unit_shear" (panel shear rigidity, nail slip and the unit shear it is taken '
                        f'at) to derive it; got {", ".join(given) or "none of them"}')
            return None
    elif kind == "wood-panel" and {"Gt", "en", "at_unit_shear"} & set(raw):
        ctx.problem(where, 'give either "Ga" or "Gt", "en" and "at_unit_shear", not both')
        return None
    if kind in ("wood-panel", "steel-deck"):
        key = "Ga" if kind == "wood-panel" else "G_prime"
        if key in raw:
            gt = ctx.quantity(raw[key], STIFFNESS, f"{where}.{key}")
        else:
            panel = ctx.quantity(raw["Gt"], STIFFNESS, where + ".Gt")
            en = ctx.quantity(raw["en"], LENGTH, where + ".en", positive=False)
            v = ctx.quantity(raw["at_unit_shear"], LINE_LOAD, where + ".at_unit_shear")
            gt = None if None in (panel, en, v) else apparent_shear_stiffness(panel, en, v)
            if gt is not None:
                slip = (f" (from Gt = {raw['Gt']}, en = {raw['en']} at {raw['at_unit_shear']}: "
                        "1/(1/Gt + 4·0.188/ft·en/v), IBC Eq. 23-1 shear and slip terms)")
        ratio = float(raw.get("axial_ratio", DEFAULT_AXIAL_RATIO))
        if not (math.isfinite(ratio) and ratio > 0):
            ctx.problem(where + ".axial_ratio", f"must be a positive number, got {ratio}")
            return None
        if gt is None:
            return None
        source = "SDPWS apparent shear stiffness, G·t = 1000·Ga lb/in for Ga in kip/in" if kind == "wood-panel" else "AISI S310 / SDI shear stiffness G′ (G·t = G′)"
        return Material(kind, ratio * gt, ratio * gt, 0.0, gt, f"{kind}: Gt = {key} ({source}){slip}; Et = {ratio:g}·Gt in both directions so that the chords carry the flexure")
    if kind == "concrete":
        E = ctx.quantity(raw["E"], PRESSURE, where + ".E")
        t = ctx.quantity(raw["thickness"], LENGTH, where + ".thickness")
        cracked = float(raw.get("cracked", DEFAULT_CRACKED))
        if not (math.isfinite(cracked) and 0 < cracked <= 1):
            ctx.problem(where + ".cracked", f"cracked-section factor must lie in (0, 1], got {cracked}")
            return None
        if E is None or t is None:
            return None
        Et = cracked * E * t
        return Material(kind, Et, Et, nu, Et / (2 * (1 + nu)), f"concrete: Et = {cracked:g}·E·t, Gt = Et/(2(1+ν)), ν = {nu:g}")
    values = [ctx.quantity(raw[k], STIFFNESS, f"{where}.{k}") for k in ("Et_x", "Et_y", "Gt")]
    if any(v is None for v in values):
        return None
    Et_x, Et_y, Gt = values
    if nu**2 * Et_y / Et_x >= 1.0:
        ctx.problem(where + ".nu", "with these Et_x and Et_y the material is not positive definite; reduce nu")
        return None
    return Material(kind, Et_x, Et_y, nu, Gt, f"custom rigidities, ν = {nu:g}")


def edge_rigidities(ctx: Context, diaphragm: dict) -> tuple[float | None, float | None]:
    """``[diaphragm] chord_EA`` and ``collector_EA`` (N), None where absent or invalid."""
    chord_EA = None
    if "chord_EA" in diaphragm:
        chord_EA = ctx.quantity(diaphragm["chord_EA"], FORCE, "diaphragm.chord_EA")
    collector_EA = None
    if "collector_EA" in diaphragm:
        collector_EA = ctx.quantity(diaphragm["collector_EA"], FORCE, "diaphragm.collector_EA")
    return chord_EA, collector_EA


def apparent_shear_stiffness(Gt: float, en: float, v: float) -> float:
    """Apparent shear rigidity (N/m, the G·t of the membrane, = 1000·Ga lb/in) that gives the
    shear and nail-slip terms of the 4-term equation, vL/(4Gt) + 0.188·L·en, as the one shear
    term 0.25·vL/(1000·Ga) of SDPWS-2015 Eq. 4.2-1: 1/(1/Gt + 4·0.188/ft·en/v), with Gt the
    panel shear rigidity (N/m), en the nail slip (m) at the unit shear v (N/m). Since slip
    depends on the load, so does the result: take v at the level the model should represent
    (SDPWS tabulates Ga at 1.4 × the ASD capacity)."""
    return 1.0 / (1.0 / Gt + 4.0 * SLIP_CONSTANT * en / v)

