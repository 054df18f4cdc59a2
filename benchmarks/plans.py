"""Plans of our own for timing: a plain rectangle and an irregular plan, meshed to a
target number of degrees of freedom."""

from __future__ import annotations

import math

# Degrees of freedom per (area / size²) for quadratic triangles, measured on these plans
# (the irregular plan has more refinement near wall ends and corners).
DOFS_PER_AREA = {"rectangle": 10.6, "irregular": 13.5}


def _size_for(area: float, dofs: int, kind: str) -> float:
    return math.sqrt(DOFS_PER_AREA[kind] * area / dofs)


def rectangle(dofs: int) -> str:
    """A 240 × 96 ft warehouse roof, walls on all four sides and two interior lines."""
    size = _size_for(240 * 96, dofs, "rectangle")
    return f'''
[plan]
name = "benchmark rectangle"
length_unit = "ft"
[diaphragm]
outline = [[0, 0], [240, 0], [240, 96], [0, 96]]
material = {{ kind = "wood-panel", Ga = "16 kip/in" }}
chord_EA = "36000 kip"
[grid]
x = {{ "1" = 0, "2" = 80, "3" = 160, "4" = 240 }}
y = {{ "A" = 0, "B" = 96 }}
[[wall]]
id = "W1"
line = "1"
from = 8
to = 88
stiffness = "120 kip/in"
[[wall]]
id = "W2"
line = "2"
from = 30
to = 66
stiffness = "60 kip/in"
[[wall]]
id = "W3"
line = "3"
from = 30
to = 66
stiffness = "60 kip/in"
[[wall]]
id = "W4"
line = "4"
from = 8
to = 88
stiffness = "120 kip/in"
[[wall]]
id = "WA"
line = "A"
from = 20
to = 220
stiffness = "200 kip/in"
[[wall]]
id = "WB"
line = "B"
from = 20
to = 220
stiffness = "200 kip/in"
[[member]]
role = "collector"
line = "2"
EA = "3000 kip"
[[member]]
role = "collector"
line = "3"
EA = "3000 kip"
[[load]]
name = "E"
kind = "seismic"
area_weight = "20 psf"
total = "110 kip"
directions = ["x", "y"]
[[load]]
name = "W"
kind = "edge"
intensity = "0.3 kip/ft"
directions = ["x", "y"]
[mesh]
size = {size:.6g}
'''


def irregular(dofs: int) -> str:
    """An L-shaped 2-wing school level with three openings, a stiff zone and 14 walls."""
    area = 300 * 120 + 120 * 100 - 3 * 16 * 12
    size = _size_for(area, dofs, "irregular")
    return f'''
[plan]
name = "benchmark irregular"
length_unit = "ft"
[diaphragm]
outline = [[0, 0], [300, 0], [300, 120], [120, 120], [120, 220], [0, 220]]
openings = [[[40, 40], [56, 40], [56, 52], [40, 52]], [[200, 60], [216, 60], [216, 72], [200, 72]],
            [[50, 160], [66, 160], [66, 172], [50, 172]]]
material = {{ kind = "concrete", E = "3600 ksi", thickness = "4 in", cracked = 0.25 }}
chord_EA = "60000 kip"
[[diaphragm.zone]]
name = "topping strip"
polygon = [[0, 0], [30, 0], [30, 220], [0, 220]]
material = {{ kind = "concrete", E = "3600 ksi", thickness = "6 in", cracked = 0.35 }}
[grid]
x = {{ "1" = 0, "2" = 60, "3" = 120, "4" = 180, "5" = 240, "6" = 300 }}
y = {{ "A" = 0, "B" = 60, "C" = 120, "D" = 220 }}
[[wall]]
id = "W1"
line = "1"
from = 10
to = 90
stiffness = "400 kip/in"
[[wall]]
id = "W2"
line = "1"
from = 130
to = 210
stiffness = "400 kip/in"
[[wall]]
id = "W3"
line = "2"
from = 80
to = 110
stiffness = "150 kip/in"
[[wall]]
id = "W4"
line = "3"
from = 130
to = 200
stiffness = "300 kip/in"
[[wall]]
id = "W5"
line = "4"
from = 20
to = 50
stiffness = "150 kip/in"
[[wall]]
id = "W6"
line = "5"
from = 70
to = 100
stiffness = "150 kip/in"
[[wall]]
id = "W7"
line = "6"
from = 10
to = 110
stiffness = "450 kip/in"
[[wall]]
id = "WA1"
line = "A"
from = 10
to = 110
stiffness = "500 kip/in"
[[wall]]
id = "WA2"
line = "A"
from = 190
to = 290
stiffness = "500 kip/in"
[[wall]]
id = "WB"
line = "B"
from = 140
to = 180
stiffness = "200 kip/in"
[[wall]]
id = "WC1"
line = "C"
from = 150
to = 290
stiffness = "500 kip/in"
[[wall]]
id = "WC2"
line = "C"
from = 20
to = 60
stiffness = "200 kip/in"
[[wall]]
id = "WD"
line = "D"
from = 10
to = 110
stiffness = "450 kip/in"
[[member]]
role = "collector"
line = "C"
EA = "20000 kip"
effective_width = 4
[[load]]
name = "E"
kind = "seismic"
area_weight = "90 psf"
line_weight = [{{ line = "D", weight = "0.4 kip/ft" }}]
point_weight = [{{ at = [250, 30], weight = "20 kip" }}]
fpx = {{ SDS = 1.0, Ie = 1.25, story_force_ratio = 0.3 }}
directions = ["x", "y"]
collector_overstrength = 2.5
[mesh]
size = {size:.6g}
'''
