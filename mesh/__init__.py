"""Plan → finite-element mesh (gmsh), the Mesh data class, checks and export."""

from .build import build_mesh
from .model import ELEMENT_NODES, LineMesh, Mesh, MeshError, check_mesh

__all__ = ["ELEMENT_NODES", "LineMesh", "Mesh", "MeshError", "build_mesh", "check_mesh"]
