"""Reads the plan file's ``[mesh]`` table (element size, order and shape of the
finite-element mesh) and refuses a mesh too large for this machine's memory, estimated
before any meshing.
"""

from __future__ import annotations

import math
import os

from .context import Context
from .model import MeshSettings

#: Bytes of memory per degree of freedom assumed for assembly + sparse factorization
#: of a 2-D membrane model (a deliberately high figure; see benchmarks/).
BYTES_PER_DOF = 4096
#: Share of the machine's memory a run may plan to use.
MEMORY_FRACTION = 0.8


def mesh_settings(ctx: Context, raw: dict, size: float, region_area: float) -> MeshSettings:
    """``[mesh]``: ``size`` (plan length unit; default 1/40 of the plan ``size``, m),
    ``order`` and ``element``, checked against memory for the diaphragm area
    ``region_area`` (m²)."""
    element = raw.get("element", "triangle")
    if element not in ("triangle", "quad", "quad8"):
        ctx.problem("mesh.element", f'must be "triangle", "quad" (9-node) or "quad8" (8-node), got "{element}"')
    order = raw.get("order", 2)
    if order not in (1, 2):
        ctx.problem("mesh.order", f"must be 1 or 2 (2, quadratic, is recommended), got {order}")
    default_size = size / 40.0
    target = raw.get("size", default_size / ctx.scale)
    if not (math.isfinite(target) and target > 0):
        ctx.problem("mesh.size", f"must be a positive number of {ctx.unit}, got {target}")
        target = default_size / ctx.scale
    settings = MeshSettings(float(target) * ctx.scale, int(order) if order in (1, 2) else 2, element)
    check_mesh_memory(ctx, settings, region_area)
    return settings


def check_mesh_memory(ctx: Context, settings: MeshSettings, area: float) -> None:
    """Refuse a mesh that could not be solved in this machine's memory (estimated
    before any meshing; see :func:`estimate_mesh`) over ``area`` (m²)."""
    dofs, need = estimate_mesh(area, settings.size, settings.order)
    available = physical_memory()
    if need > MEMORY_FRACTION * available:
        per_dof = need / dofs
        dofs_allowed = MEMORY_FRACTION * available / per_dof
        coarsest = settings.size * math.sqrt(dofs / dofs_allowed)
        ctx.problem(
            "mesh.size",
            f"{settings.size / ctx.scale:g} {ctx.unit} would give about {dofs / 1e6:.3g} million degrees of "
            f"freedom and need about {need / 2**30:.3g} GB of memory (this machine has {available / 2**30:.3g} GB); "
            f"coarsen the mesh: use mesh.size of at least {coarsest / ctx.scale:.3g} {ctx.unit}",
        )


def estimate_mesh(area: float, size: float, order: int) -> tuple[float, float]:
    """Rough degrees of freedom and memory (bytes) of a triangle mesh of element size
    ``size`` (m) over ``area`` (m²): about 2.3·A/h² triangles, 2 displacement DOFs per
    node, ≈ 2 nodes per quadratic triangle (½ for linear)."""
    triangles = 2.31 * area / size**2
    nodes = triangles * (2.0 if order == 2 else 0.5)
    dofs = 2.0 * nodes
    return dofs, dofs * BYTES_PER_DOF


def physical_memory() -> float:
    """Installed memory of this machine in bytes (24 GB assumed if it cannot be read)."""
    try:
        return float(os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES"))
    except (ValueError, OSError, AttributeError):
        return 24.0 * 2**30
