"""Finite-element membrane, bar and wall-spring elements. Not yet implemented; see the open issues."""
