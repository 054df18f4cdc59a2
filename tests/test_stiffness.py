"""Wall stiffness models against published deflection formulas."""

import pytest

from planshear.stiffness import pier_stiffness, wood_wall_stiffness

from conftest import FT, INCH, KIP

KSI = 6.894757e6  # Pa (NIST SP 811, 2008, B.9)
PSI = 6.894757e3


@pytest.mark.parametrize("h_over_d", [0.5, 2.0])
def test_cantilever_pier_normalized_form(h_over_d):
    """Taly, Design of Reinforced Masonry Structures, 2nd ed. (2010), §7.4.2:
    Δc = P/(Em·t)·[4(h/d)³ + 3(h/d)] for a cantilever pier with Ev = 0.4 Em."""
    E, t, d = 1800 * KSI, 7.625 * INCH, 8 * FT
    k = pier_stiffness(E, t, h_over_d * d, d, "free").value
    assert k == pytest.approx(E * t / (4 * h_over_d**3 + 3 * h_over_d), rel=1e-12)


@pytest.mark.parametrize("h_over_d", [0.5, 2.0])
def test_fixed_pier_normalized_form(h_over_d):
    """Taly (2010) §7.4.2: fixed pier Δf = P/(Em·t)·[(h/d)³ + 3(h/d)] (from Δ = Vh³/12EI + 1.2Vh/AG)."""
    E, t, d = 3600 * KSI, 8 * INCH, 12 * FT
    k = pier_stiffness(E, t, h_over_d * d, d, "fixed").value
    assert k == pytest.approx(E * t / (h_over_d**3 + 3 * h_over_d), rel=1e-12)


def test_pier_with_explicit_shear_modulus():
    """Δ = Vh³/(3EI) + 1.2Vh/(AG) written out by hand with G = 0.35E."""
    E, G, t, h, d = 3000 * KSI, 1050 * KSI, 0.2, 3.0, 2.0
    flex = h**3 / (3 * E * t * d**3 / 12) + 1.2 * h / (t * d * G)
    assert pier_stiffness(E, t, h, d, "free", G).value == pytest.approx(1 / flex, rel=1e-12)


def test_pier_top_must_be_free_or_fixed():
    with pytest.raises(ValueError):
        pier_stiffness(1.0, 1.0, 1.0, 1.0, "pinned")


def test_wood_wall_against_sdpws_equation():
    """ANSI/AWC SDPWS-2015 Eq. 4.3-1 in its own units:
    δ = 8vh³/(EAb) + vh/(1000·Ga) + h·Δa/b (δ in, v plf, h and b ft, E psi, A in², Ga kip/in),
    with Δa = T/k_hd and T = V·h/b, the overturning force in the end post."""
    V_lb, b_ft, h_ft = 6000.0, 12.0, 9.0
    E_psi, A_in2, Ga, k_hd_lb_in = 1.6e6, 19.25, 22.0, 60000.0
    v = V_lb / b_ft
    tension = V_lb * h_ft / b_ft
    delta_in = (8 * v * h_ft**3 / (E_psi * A_in2 * b_ft) + v * h_ft / (1000 * Ga)
                + h_ft * (tension / k_hd_lb_in) / b_ft)
    k = wood_wall_stiffness(Ga * KIP / INCH, h_ft * FT, b_ft * FT, E_psi * PSI * A_in2 * INCH**2,
                            k_hd_lb_in * KIP / 1000 / INCH)
    # rel 1e-6: the psi factor above is rounded to 7 digits (SP 811)
    assert V_lb * KIP / 1000 / k.value == pytest.approx(delta_in * INCH, rel=1e-6)
    assert "SDPWS" in k.formula


def test_wood_wall_without_holdown_term():
    k_rigid = wood_wall_stiffness(1e6, 3.0, 4.0, 1e7).value
    k_soft = wood_wall_stiffness(1e6, 3.0, 4.0, 1e7, 1e6).value
    assert k_soft < k_rigid
