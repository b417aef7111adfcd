"""Layers handed to the Monte Carlo and ``[uncertainty] vd_follows_air``.

``monte_carlo(..., layers=)`` takes linear layers already built; the grid of the air
ratio that lets the draws' Vd(SO2) and Vd(NH3) follow the drawn air is built only on
request (``linear_layer(..., air_vd=True)``).  Before, layers built without it ran
with the option on and the result said the velocities followed the air
(``air_vd_followed``, and from it the report and the console) while the draws kept
the velocities of the measured air; layers built with it ran with the option off and
the draws followed the air anyway.  Now the first is refused with one message and the
second gives the draws of a layer built without the grid, value for value.
"""

import numpy as np
import pytest

from analysis.air_vd_case import quiet as _quiet
from analysis.air_vd_case import scenario as _scenario
from ui.demo_subset import study_and_args
from workbench.analysis import uncertainty as U





@pytest.fixture(scope="module")
def ridge(tmp_path_factory):
    sc = _scenario(tmp_path_factory.mktemp("layers"))
    study, args = study_and_args(sc)
    return study, _quiet(study.run, *args)


def _layers(study, res, grid):
    """As monte_carlo builds them (one layer where the run's years are its budget)."""
    budget = _quiet(U.linear_layer, res, study, "budget", None, False, grid)
    years = (budget if res.years is res.budget
             else _quiet(U.linear_layer, res, study, "years", None, False, grid))
    return {"budget": budget, "years": years}


def _same(a, b):
    """Every variable of two results of monte_carlo equal, value for value (bytes)."""
    for name in ("budget", "years", "span", "total_draws"):
        x, y = getattr(a, name), getattr(b, name)
        assert (x is None) == (y is None), name
        if x is None:
            continue
        assert set(x.data_vars) == set(y.data_vars), name
        for v in x.data_vars:
            assert x[v].values.tobytes() == y[v].values.tobytes(), (name, v)
            assert x[v].attrs == y[v].attrs, (name, v)
    assert a.air_vd_followed == b.air_vd_followed
    assert a.air_vd_held == b.air_vd_held


def test_layers_without_the_grid_are_refused_when_the_option_is_on(ridge):
    study, res = ridge
    bare = _layers(study, res, False)
    opt = U.UncertaintyOptions(draws=10, seed=3, vd_follows_air=True)
    with pytest.raises(ValueError) as err:
        _quiet(U.monte_carlo, res, study, opt, layers=bare)
    msg = str(err.value)
    assert "vd_follows_air" in msg and "built without the grid" in msg
    assert "air_vd=True" in msg and "layers=None" in msg
    # one layer of two without it is refused too
    mixed = {"budget": bare["budget"], "years": _layers(study, res, True)["years"]}
    if mixed["budget"] is not mixed["years"]:
        with pytest.raises(ValueError, match="built without the grid"):
            _quiet(U.monte_carlo, res, study, opt, layers=mixed)


def test_layers_with_the_grid_follow_the_air_as_monte_carlo_builds_them(ridge):
    """The right layers are not refused: the draws of monte_carlo's own layers."""
    study, res = ridge
    opt = U.UncertaintyOptions(draws=10, seed=3, vd_follows_air=True)
    own = _quiet(U.monte_carlo, res, study, opt)
    given = _quiet(U.monte_carlo, res, study, opt, layers=_layers(study, res, True))
    assert given.air_vd_followed == ("so2_codeposition", "nh3_acid_ratio_from_air")
    _same(given, own)


def test_layers_with_the_grid_and_the_option_off_draw_as_without_it(ridge):
    """The draws of a layer built without the grid, byte for byte, nothing named as
    followed or held; the caller's layers keep their grid."""
    study, res = ridge
    opt = U.UncertaintyOptions(draws=10, seed=3)
    with_grid = _layers(study, res, True)
    assert with_grid["years"].sites[0].air_vd          # the grid is there to be left out
    off = _quiet(U.monte_carlo, res, study, opt, layers=with_grid)
    bare = _quiet(U.monte_carlo, res, study, opt, layers=_layers(study, res, False))
    default = _quiet(U.monte_carlo, res, study, opt)
    assert off.air_vd_followed == () and off.air_vd_held == ()
    _same(off, bare)
    _same(off, default)
    assert set(with_grid["years"].sites[0].air_vd) == {"SO2", "NH3"}
    # the option's draws differ: what the layers' grid would have given
    on = _quiet(U.monte_carlo, res, study, U.UncertaintyOptions(draws=10, seed=3,
                                                                 vd_follows_air=True),
                layers=with_grid)
    j = [c[1:] for c in U.COMPONENTS].index(("dry", "SO2"))
    assert not np.array_equal(on.years["deposition"].values[..., j],
                              off.years["deposition"].values[..., j], equal_nan=True)
