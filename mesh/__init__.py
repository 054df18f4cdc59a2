"""Plan → finite-element mesh (gmsh). Not yet implemented; see the open issues."""
