"""Mesh files (mesh.vtu, mesh.xdmf, mesh.msh): units in every field name, plan or SI units,
and a model complete enough to be re-solved by an independent program.

The re-solve below does not use planshear's assembly: it builds K from the exported mesh,
rigidities, bar EA and wall springs with its own element formulas and solves K u = F with
the exported nodal loads."""

from __future__ import annotations

import textwrap

import meshio
import numpy as np
import pytest
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from planshear import analyze, parse_plan
from planshear.cli import main
from planshear.errors import PlanError
from planshear.mesh_export import MeshUnits

from conftest import FT, INCH, KIP

PLAN = textwrap.dedent(
    """
    [plan]
    name = "mesh export check"
    length_unit = "ft"

    [diaphragm]
    outline = [[0, 0], [60, 0], [60, 25], [35, 25], [35, 40], [0, 40]]
    openings = [[[10, 15], [18, 15], [18, 22], [10, 22]]]
    material = { kind = "custom", Et_x = "40 kip/in", Et_y = "25 kip/in", Gt = "12 kip/in", nu = 0.2 }
    chord_EA = "20000 kip"

    [[diaphragm.zone]]
    name = "east"
    polygon = [[45, 0], [60, 0], [60, 25], [45, 25]]
    material = { kind = "wood-panel", Ga = "20 kip/in" }

    [grid]
    x = { "1" = 0, "2" = 35, "3" = 60 }
    y = { "A" = 0, "B" = 25, "C" = 40 }

    [[wall]]
    id = "W1"
    line = "1"
    from = 5
    to = 35
    stiffness = "40 kip/in"

    [[wall]]
    id = "W2"
    line = "3"
    from = 0
    to = 25
    stiffness = "30 kip/in"

    [[wall]]
    id = "W3"
    line = "A"
    from = 10
    to = 50
    stiffness = "50 kip/in"

    [[wall]]
    id = "W4"
    line = "C"
    from = 0
    to = 20
    stiffness = "25 kip/in"

    [[member]]
    role = "collector"
    line = "B"
    from = 0
    to = 35
    EA = "3000 kip"

    [[load]]
    name = "E"
    kind = "seismic"
    area_weight = "15 psf"
    point_weight = [{ at = [50, 12], weight = "3 kip" }]
    total = "30 kip"
    directions = ["x", "y"]

    [mesh]
    size = 5.0
    order = ORDER
    """
)


@pytest.fixture(scope="module", params=[(1, "triangle"), (2, "triangle"), (2, "quad")], ids=["tri3", "tri6", "quad9"])
def written(request, tmp_path_factory):
    """The plan analyzed once per element type and written in both unit sets."""
    order, element = request.param
    text = PLAN.replace("ORDER", f'{order}\nelement = "{element}"')
    results = analyze(parse_plan(text, "mesh_export.toml"))
    folder = tmp_path_factory.mktemp(f"mesh{order}{element}")
    results.write(folder / "si", report=False, mesh_units="si")
    results.write(folder / "plan", report=False, mesh_units="plan")
    return folder, results


def _field(data: dict, prefix: str):
    """The one field whose name starts with ``prefix`` (the unit follows it)."""
    names = [k for k in data if k.startswith(prefix)]
    assert len(names) == 1, (prefix, list(data))
    return names[0], data[names[0]]


# Independent elements: plane stress (orthotropic, per unit width), straight bars and
# distributed springs, each with its own shape functions and Gauss rule.

#: Quadrilateral nodes in the VTK/meshio order (corners, mid-sides, centre) on [−1, 1]².
_QUAD9 = np.array([[-1, -1], [1, -1], [1, 1], [-1, 1], [0, -1], [1, 0], [0, 1], [-1, 0], [0, 0]], dtype=float)


def _quad_shape(xi: float, eta: float):
    """Shape functions and derivatives of the 9-node Lagrange quadrilateral: products of
    the 1-D quadratics through −1, 0, 1 (Zienkiewicz & Taylor, The Finite Element Method,
    Vol. 1, 6th ed., 2005, §6.4)."""
    def lagrange(x, node):
        values = {-1.0: (0.5 * x * (x - 1), x - 0.5), 0.0: (1 - x * x, -2 * x), 1.0: (0.5 * x * (x + 1), x + 0.5)}
        return values[float(node)]

    n, d_xi, d_eta = [], [], []
    for a, b in _QUAD9:
        (la, da), (lb, db) = lagrange(xi, a), lagrange(eta, b)
        n.append(la * lb)
        d_xi.append(da * lb)
        d_eta.append(la * db)
    return np.array(n), np.array([d_xi, d_eta])


def _tri_shape(kind: str, xi: float, eta: float):
    """Shape functions and derivatives d/dξ, d/dη of the 3- and 6-node triangles
    (VTK/meshio node order: corners, then mid-sides 0-1, 1-2, 2-0)."""
    l1, l2, l3 = 1.0 - xi - eta, xi, eta
    if kind == "triangle":
        return np.array([l1, l2, l3]), np.array([[-1.0, 1.0, 0.0], [-1.0, 0.0, 1.0]])
    n = np.array([l1 * (2 * l1 - 1), l2 * (2 * l2 - 1), l3 * (2 * l3 - 1), 4 * l1 * l2, 4 * l2 * l3, 4 * l3 * l1])
    d_xi = np.array([-(4 * l1 - 1), 4 * l2 - 1, 0.0, 4 * (l1 - l2), 4 * l3, -4 * l3])
    d_eta = np.array([-(4 * l1 - 1), 0.0, 4 * l3 - 1, -4 * l2, 4 * l2, 4 * (l1 - l3)])
    return n, np.array([d_xi, d_eta])


def _membrane(kind, xy, Etx, Ety, nu, Gt):
    """Element matrices (m, 2n, 2n) = ∫ Bᵀ D B dA; D is the orthotropic plane-stress
    matrix Q of R. M. Jones, *Mechanics of Composite Materials*, 2nd ed., 1999, Eq. 2.61
    (Q11 = E1/(1−ν12ν21), Q12 = ν12E2/(1−ν12ν21), Q22 = E2/(1−ν12ν21), Q66 = G12), here
    with rigidities per unit width. Full integration: three points on triangles, 3 × 3 on
    the 9-node quadrilateral."""
    nu_yx = nu * Ety / Etx
    f = 1.0 / (1.0 - nu * nu_yx)
    D = np.zeros((len(xy), 3, 3))
    D[:, 0, 0], D[:, 1, 1], D[:, 2, 2] = f * Etx, f * Ety, Gt
    D[:, 0, 1] = D[:, 1, 0] = f * nu * Ety
    n_nodes = xy.shape[1]
    K = np.zeros((len(xy), 2 * n_nodes, 2 * n_nodes))
    if kind == "quad9":  # 3 × 3 Gauss rule
        g, w = np.polynomial.legendre.leggauss(3)
        rule = [(a, b, wa * wb, _quad_shape(a, b)[1]) for a, wa in zip(g, w, strict=True)
                for b, wb in zip(g, w, strict=True)]
    else:  # three points, weights 1/6 each (exact for the 6-node triangle's quadratic integrand)
        rule = [(a, b, 1 / 6, _tri_shape(kind, a, b)[1]) for a, b in ((1 / 6, 1 / 6), (2 / 3, 1 / 6), (1 / 6, 2 / 3))]
    for _, _, weight, dn in rule:
        J = np.einsum("an,mnj->maj", dn, xy)  # (m, 2, 2): d(x, y)/d(ξ, η)
        det = J[:, 0, 0] * J[:, 1, 1] - J[:, 0, 1] * J[:, 1, 0]
        dxy = np.linalg.solve(J, np.broadcast_to(dn, (len(xy),) + dn.shape))  # (m, 2, n): d/dx, d/dy
        B = np.zeros((len(xy), 3, 2 * n_nodes))
        B[:, 0, 0::2], B[:, 1, 1::2] = dxy[:, 0], dxy[:, 1]
        B[:, 2, 0::2], B[:, 2, 1::2] = dxy[:, 1], dxy[:, 0]
        K += np.einsum("mai,mab,mbj->mij", B, D, B) * (det * weight)[:, None, None]
    return K


def _line_shape(n_nodes: int, s: float):
    """Shape functions and d/ds on [−1, 1] of 2- and 3-node lines (order start, end, mid)."""
    if n_nodes == 2:
        return np.array([(1 - s) / 2, (1 + s) / 2]), np.array([-0.5, 0.5])
    return np.array([s * (s - 1) / 2, s * (s + 1) / 2, 1 - s * s]), np.array([s - 0.5, s + 0.5, -2 * s])


def _line_matrices(xy, EA, k_per_length, direction):
    """Bar (EA ∫ N'ᵢN'ⱼ ds along the tangent) and spring (k' ∫ NᵢNⱼ ds along ``direction``)
    matrices (m, 2n, 2n), three-point Gauss rule."""
    n_nodes = xy.shape[1]
    length = np.linalg.norm(xy[:, 1] - xy[:, 0], axis=1)
    tangent = (xy[:, 1] - xy[:, 0]) / length[:, None]
    bar = np.zeros((len(xy), n_nodes, n_nodes))
    mass = np.zeros((n_nodes, n_nodes))
    for s, w in ((-np.sqrt(0.6), 5 / 9), (0.0, 8 / 9), (np.sqrt(0.6), 5 / 9)):
        n, dn = _line_shape(n_nodes, s)
        bar += w * np.outer(dn, dn)[None] * (2.0 / length)[:, None, None]
        mass += w * np.outer(n, n) * 0.5
    bar *= EA[:, None, None]
    spring = mass[None] * (k_per_length * length)[:, None, None]
    tt = np.einsum("mi,mj->mij", tangent, tangent)
    dd = np.einsum("mi,mj->mij", direction, direction)
    return (np.einsum("mab,mij->maibj", bar, tt).reshape(len(xy), 2 * n_nodes, 2 * n_nodes)
            + np.einsum("mab,mij->maibj", spring, dd).reshape(len(xy), 2 * n_nodes, 2 * n_nodes))


def _assemble(n_dofs, cells, matrices):
    dofs = np.stack([2 * cells, 2 * cells + 1], axis=-1).reshape(len(cells), -1)
    rows = np.broadcast_to(dofs[:, :, None], matrices.shape).ravel()
    cols = np.broadcast_to(dofs[:, None, :], matrices.shape).ravel()
    return sp.coo_matrix((matrices.ravel(), (rows, cols)), shape=(n_dofs, n_dofs)).tocsr()


def test_exported_model_re_solves_to_the_exported_displacements(written):
    """K u = F assembled independently from mesh.vtu (SI) reproduces the exported u of
    every case; F balances the wall forces (nothing but the springs supports the model)."""
    folder, results = written
    mesh = meshio.read(folder / "si" / "mesh.vtu")
    xy = mesh.points[:, :2]
    n_dofs = 2 * len(xy)
    membrane, lines = mesh.cells[0], mesh.cells[1]
    assert membrane.type in ("triangle", "triangle6", "quad9") and lines.type in ("line", "line3")
    cd = mesh.cell_data
    K = _assemble(n_dofs, membrane.data, _membrane(
        membrane.type, xy[membrane.data], cd["Et_x (N/m)"][0], cd["Et_y (N/m)"][0], cd["nu_xy"][0], cd["Gt (N/m)"][0]))
    K += _assemble(n_dofs, lines.data, _line_matrices(
        xy[lines.data], cd["EA (N)"][1], cd["wall_k_per_length (N/m²)"][1], cd["wall_direction"][1][:, :2]))
    cases = [c.name for c in results.cases if "semirigid" in c.assumptions]
    F = np.column_stack([mesh.point_data[f"F[{c}] (N)"][:, :2].ravel() for c in cases])
    u = np.column_stack([mesh.point_data[f"u[{c}] (m)"][:, :2].ravel() for c in cases])
    mine = spla.splu(K.tocsc()).solve(F)
    # Round-off of two different assemblies and factorizations of a matrix whose
    # stiffness spans several orders (walls vs. soft membrane directions).
    assert np.max(np.abs(mine - u)) <= 1e-7 * np.max(np.abs(u))
    # The exported loads are the case's: Σ Fx of E+x is its force.
    assert np.isclose(np.sum(F[0::2, cases.index("E+x")]), results.cases[0].force, rtol=1e-9)
    # Lumped nodal springs carry the same total stiffness as the consistent ones.
    k_nodes = mesh.point_data["wall_spring (N/m)"]
    k_walls = sum(w.k for w in results.plan.walls)
    assert np.sum(k_nodes[:, 0] + k_nodes[:, 1]) == pytest.approx(k_walls, rel=1e-12)


def test_wall_springs_add_up_to_the_wall_stiffness(written):
    """Σ k'·L over a wall's edges equals the wall stiffness of the plan (kip/in given)."""
    folder, results = written
    mesh = meshio.read(folder / "si" / "mesh.vtu")
    edges = mesh.cells[1].data
    length = np.linalg.norm(mesh.points[edges[:, 1], :2] - mesh.points[edges[:, 0], :2], axis=1)
    wall_id = mesh.cell_data["wall_id"][1]
    k = mesh.cell_data["wall_k_per_length (N/m²)"][1]
    given = {"W1": 40, "W2": 30, "W3": 50, "W4": 25}  # kip/in, from the plan above
    for index, wall in enumerate(results.plan.walls):
        assert np.sum((k * length)[wall_id == index]) == pytest.approx(given[wall.id] * KIP / INCH, rel=1e-12)


def test_plan_units_are_the_si_values_converted(written):
    """--mesh-units plan: every field is the SI field in the unit its name states
    (ft, in, kip, kip/ft, kip/in); conversions from NIST SP 811 (2008) App. B.9."""
    folder, _ = written
    si = meshio.read(folder / "si" / "mesh.vtu")
    plan = meshio.read(folder / "plan" / "mesh.vtu")
    np.testing.assert_allclose(plan.points * FT, si.points, rtol=1e-14)
    factors = {"(m)": 1 / INCH, "(N)": 1 / KIP, "(N/m)": FT / KIP, "(N/m²)": INCH * FT / KIP}
    renamed = {"u[E+x] (m)": "u[E+x] (in)", "F[E+x] (N)": "F[E+x] (kip)", "wall_spring (N/m)": "wall_spring (kip/in)"}
    for old, new in renamed.items():
        factor = INCH / KIP if "spring" in old else factors[old[old.index("("):]]
        np.testing.assert_allclose(plan.point_data[new], si.point_data[old] * factor, rtol=1e-12)
    cells = {"N[E+y] (N/m)": ("N[E+y] (kip/ft)", FT / KIP), "Gt (N/m)": ("Gt (kip/in)", INCH / KIP),
             "EA (N)": ("EA (kip)", 1 / KIP), "wall_k_per_length (N/m²)": ("wall_k_per_length (kip/in/ft)", INCH * FT / KIP),
             "bar_force[E+x] (N)": ("bar_force[E+x] (kip)", 1 / KIP)}
    for old, (new, factor) in cells.items():
        for block in (0, 1):
            np.testing.assert_allclose(plan.cell_data[new][block], si.cell_data[old][block] * factor, rtol=1e-12)


@pytest.mark.parametrize("name", ["mesh.vtu", "mesh.xdmf", "mesh.msh"])
@pytest.mark.parametrize("system", ["si", "plan"])
def test_every_quantity_states_its_unit_in_each_file(written, name, system):
    """Read back with meshio: every point and cell field that has a unit carries it in
    parentheses, in each format; mesh.msh also names its physical groups."""
    folder, results = written
    mesh = meshio.read(folder / system / name)
    units = MeshUnits.for_plan(results.plan, system)
    unitless = {"zone", "wall_id", "nu_xy", "wall_direction"}
    expected_u = "(m)" if system == "si" else "(in)"
    assert any(k.startswith("u[E+x]") and k.endswith(expected_u) for k in mesh.point_data)
    for key in list(mesh.point_data) + [k for k in mesh.cell_data if not k.startswith("gmsh:")]:
        assert key in unitless or key.endswith(")"), f"{name}: field {key} has no unit"
    assert f"F[E+y] ({units.force})" in mesh.point_data
    if name == "mesh.msh":
        assert "membrane, zone east" in mesh.field_data
    if name == "mesh.vtu":
        assert f"EA ({units.force})" in mesh.cell_data and "wall_direction" in mesh.cell_data
    if name == "mesh.xdmf":
        assert f"Gt ({units.rigidity})" in mesh.cell_data


def test_unknown_mesh_units_are_refused(written, tmp_path, capsys):
    _, results = written
    with pytest.raises(PlanError, match="mesh units"):
        MeshUnits.for_plan(results.plan, "imperial")
    with pytest.raises(SystemExit):
        main(["demo", "--out", str(tmp_path / "x"), "--mesh-units", "imperial"])
    assert "invalid choice" in capsys.readouterr().err


def test_cli_writes_plan_units(tmp_path):
    """planshear run --mesh-units plan: the files carry plan units (ft coordinates, in
    displacements); the default is SI."""
    plan_file = tmp_path / "plan.toml"
    plan_file.write_text(PLAN.replace("ORDER", "1"), encoding="utf-8")
    assert main(["run", str(plan_file), "--out", str(tmp_path / "plan"), "--quiet", "--no-report",
                 "--mesh-units", "plan"]) == 0
    assert main(["run", str(plan_file), "--out", str(tmp_path / "si"), "--quiet", "--no-report"]) == 0
    in_plan = meshio.read(tmp_path / "plan" / "mesh.vtu")
    in_si = meshio.read(tmp_path / "si" / "mesh.vtu")
    assert "u[E+x] (in)" in in_plan.point_data and "u[E+x] (m)" in in_si.point_data
    assert in_plan.points[:, :2].max() == pytest.approx(60.0)  # the outline's 60 ft
    assert in_si.points[:, :2].max() == pytest.approx(60.0 * FT)
