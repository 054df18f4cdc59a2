"""The plan model: a TOML plan file read into typed, immutable objects.

One module per part of the plan file: :mod:`.reader` (``load_plan``, ``parse_plan``: the
file, the schema, the ``[plan]`` table, then every section in order), :mod:`.geometry`,
:mod:`.materials`, :mod:`.walls`, :mod:`.loads`, :mod:`.mesh_settings`, :mod:`.design`;
:mod:`.model` holds the frozen dataclasses, :mod:`.context` the shared problem list and
parsers, :mod:`.stability` the check that the walls hold the diaphragm. Every public name
is re-exported here: import from ``planshear.plan``.
"""

from .context import GEOMETRY_TOLERANCE, MAX_COORDINATE
from .loads import DEFAULT_FOOTPRINT, FACE_NORMALS, LOAD_KINDS
from .materials import (
    DEFAULT_AXIAL_RATIO,
    DEFAULT_CRACKED,
    MATERIAL_KINDS,
    SLIP_CONSTANT,
    apparent_shear_stiffness,
)
from .mesh_settings import BYTES_PER_DOF, MEMORY_FRACTION, estimate_mesh, physical_memory
from .model import (
    Capacities,
    ClassificationFlags,
    GridLine,
    Load,
    Material,
    Member,
    MeshSettings,
    Plan,
    Splice,
    Transfer,
    Wall,
    Zone,
    merge_intervals,
)
from .reader import TITLE_BLOCK_KEYS, load_plan, parse_plan
from .stability import Stability, assess_stability, check_stability, rigid_stiffness_rows
from .walls import MEMBER_ROLES, expand_wall_types

__all__ = [
    "BYTES_PER_DOF",
    "DEFAULT_AXIAL_RATIO",
    "DEFAULT_CRACKED",
    "DEFAULT_FOOTPRINT",
    "FACE_NORMALS",
    "GEOMETRY_TOLERANCE",
    "LOAD_KINDS",
    "MATERIAL_KINDS",
    "MAX_COORDINATE",
    "MEMBER_ROLES",
    "MEMORY_FRACTION",
    "SLIP_CONSTANT",
    "TITLE_BLOCK_KEYS",
    "Capacities",
    "ClassificationFlags",
    "GridLine",
    "Load",
    "Material",
    "Member",
    "MeshSettings",
    "Plan",
    "Splice",
    "Stability",
    "Transfer",
    "Wall",
    "Zone",
    "apparent_shear_stiffness",
    "assess_stability",
    "check_stability",
    "estimate_mesh",
    "expand_wall_types",
    "load_plan",
    "merge_intervals",
    "parse_plan",
    "physical_memory",
    "rigid_stiffness_rows",
]
