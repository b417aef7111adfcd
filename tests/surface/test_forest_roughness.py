"""Forest roughness by Raupach (1994) rather than the short-canopy rule."""
import pytest

from workbench.surface.roughness import FOREST_RULE, land_use_roughness, raupach_roughness


def test_raupach_1994_hand_worked():
    # hand-worked from Raupach (1994), Boundary-Layer Meteorol. 71, 211, Eqs. 8-9 (from
    # memory), Lambda = 2.5: sqrt(7.5*2.5) = 4.330127, exp(-4.330127) = 0.013167,
    # d/h = 1 - 0.986833/4.330127 = 0.772100; u*/U = min(sqrt(0.753), 0.3) = 0.3;
    # z0/h = 0.227900 * exp(-0.4/0.3 + 0.193) = 0.227900 * 0.319714 = 0.072863
    z0_h, d_h = raupach_roughness(2.5)
    assert d_h == pytest.approx(0.772100, abs=2e-6)
    assert z0_h == pytest.approx(0.072863, abs=2e-6)
    # sparse canopy: u*/U below its cap, d/h small
    z0_s, d_s = raupach_roughness(0.05)
    assert d_s < 0.4 and z0_s < z0_h * 2


def test_forest_rule_near_jarvis_1976():
    # Jarvis, James and Landsberg (1976), forest canopies: d about 0.78 h and z0 about
    # 0.075 h (from memory)
    assert FOREST_RULE[1] == pytest.approx(0.78, rel=0.05)
    assert FOREST_RULE[0] == pytest.approx(0.075, rel=0.1)
    z0, d = land_use_roughness("conifer_forest", 14.0)
    assert float(z0) == pytest.approx(FOREST_RULE[0] * 14.0)
    assert float(d) == pytest.approx(FOREST_RULE[1] * 14.0)
    z0g, dg = land_use_roughness("grass", 0.12)      # short canopies keep 0.123 h, 2/3 h
    assert float(z0g) == pytest.approx(0.123 * 0.12) and float(dg) == pytest.approx(0.08)
