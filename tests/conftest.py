"""Shared helpers for the tests: small plans written inline as TOML."""

from __future__ import annotations

import textwrap

import pytest

from planshear.plan import parse_plan

KIP = 4448.2216152605  # N per kip (NIST SP 811, 2008, Appendix B.9: 4.448222 E+03)
FT = 0.3048  # m per ft (exact)
INCH = 0.0254  # m per in (exact)
PSF = 47.880258980336  # Pa per lbf/ft² (NIST SP 811, 2008, Appendix B.9: 4.788026 E+01)


def rectangle_plan(
    length: float = 100.0,
    depth: float = 50.0,
    walls: str = "",
    extra: str = "",
    load: str | None = None,
    grid: str | None = None,
    material: str = '{ kind = "wood-panel", Ga = "20 kip/in" }',
) -> str:
    """TOML of a rectangular plan (ft) with the given walls and load tables."""
    length, depth = f"{length:g}", f"{depth:g}"
    if grid is None:
        grid = f'x = {{ "1" = 0, "2" = {length} }}\ny = {{ "A" = 0, "B" = {depth} }}'
    if load is None:
        load = textwrap.dedent(
            """
            [[load]]
            name = "E"
            kind = "seismic"
            area_weight = "20 psf"
            total = "100 kip"
            directions = ["x", "y"]
            """
        )
    return textwrap.dedent(
        f"""
        [plan]
        name = "test rectangle"
        length_unit = "ft"

        [diaphragm]
        outline = [[0, 0], [{length}, 0], [{length}, {depth}], [0, {depth}]]
        material = {material}
        chord_EA = "40000 kip"

        [grid]
        """
    ) + grid + "\n" + walls + "\n" + extra + "\n" + load


def end_walls(length: float = 100.0, depth: float = 50.0, k: str = "50 kip/in") -> str:
    """Four full-length walls on the edges of a rectangle."""
    length, depth = f"{length:g}", f"{depth:g}"
    return textwrap.dedent(
        f"""
        [[wall]]
        id = "W1"
        line = "1"
        from = 0
        to = {depth}
        stiffness = "{k}"

        [[wall]]
        id = "W2"
        line = "2"
        from = 0
        to = {depth}
        stiffness = "{k}"

        [[wall]]
        id = "WA"
        line = "A"
        from = 0
        to = {length}
        stiffness = "{k}"

        [[wall]]
        id = "WB"
        line = "B"
        from = 0
        to = {length}
        stiffness = "{k}"
        """
    )


@pytest.fixture
def plan_from():
    def build(text: str, label: str = "test.toml"):
        return parse_plan(text, label)

    return build
