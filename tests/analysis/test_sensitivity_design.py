"""The console of ``workbench sensitivity`` gives each factor's range with its unit
(workbench/analysis/sensitivity_design.py, ``range_words``).

Before, it printed ``varied (uniform ranges): vd_SO2 0.667 to 1.5, ..., z0_grass 0.01
to 0.1`` (read as a new user: is 0.667 to 1.5 a Vd in cm/s, and 0.01 to 0.1 in which
unit?), and the rules of ``wetness_rule`` ran on with the same commas as the factors.
"""
import re

import pytest

from workbench.analysis.sensitivity_options import SensitivityOptions

pytest.importorskip("SALib")

FACTORS = {"vd_SO2": (0.5, 1.5), "gauge_catch": (0.9, 1.1), "z0_grass": (0.01, 0.1),
           "fine_mmd_pSO4": (2e-7, 6e-7), "fine_fraction_pNO3": (0.2, 0.6),
           "rc_scale_SO2": (0.5, 2.0), "nh3_gamma_grass": (0.5, 2.0),
           "wetness_rule": ["met", "always_wet"]}


def _varied_line():
    from workbench.analysis.sensitivity_design import design, design_lines
    d = design(SensitivityOptions(samples=64, factors=FACTORS),
               {"sobol_evaluations": 640, "sobol_engine_runs": 2,
                "tornado_evaluations": 17, "tornado_engine_runs": 2})
    return next(x for x in design_lines(d) if x.startswith("varied (uniform ranges): "))


def test_every_range_on_the_console_has_its_unit():
    items = _varied_line().removeprefix("varied (uniform ranges): ").split("; ")
    got = dict(item.split(" ", 1) for item in items)
    assert list(got) == list(FACTORS)                  # one item per factor, in order
    assert got["vd_SO2"] == "0.5 to 1.5 (multiplier)"
    assert got["gauge_catch"] == "0.9 to 1.1 (multiplier)"
    assert got["rc_scale_SO2"] == got["nh3_gamma_grass"] == "0.5 to 2 (multiplier)"
    assert got["z0_grass"] == "0.01 to 0.1 m"
    assert got["fine_mmd_pSO4"] == "2e-07 to 6e-07 m"
    assert got["fine_fraction_pNO3"] == "0.2 to 0.6 (mass fraction)"
    assert got["wetness_rule"] == "one of met, always_wet (equally likely)"
    # no bare number: each range ends in a unit or says what it is
    for name, text in got.items():
        assert not re.search(r"\d$", text), (name, text)


def _unwrapped(out: str) -> list:
    """The console's lines with each continuation (two spaces deeper, cli_status.
    console_lines) joined to its line again."""
    lines = []
    for x in out.splitlines():
        if x.startswith("  ") and lines:
            lines[-1] += " " + x.strip()
        else:
            lines.append(x)
    return lines


def test_the_sensitivity_command_prints_the_units(tiny, tmp_path, capsys):
    from workbench.cli import main
    sc, _, _, _ = tiny
    capsys.readouterr()
    assert main(["sensitivity", str(sc.path), "--out", str(tmp_path / "s"), "--quiet"]) == 0
    out = capsys.readouterr().out
    # an 80-column terminal: each line wrapped under a hanging indent (old code: the
    # lines of the design ran to 200-400 columns, as no other command's)
    long = [x for x in out.splitlines() if len(x) > 79 and " " in x.strip()]
    assert not long, out                      # only a path alone may be longer
    line = next(x for x in _unwrapped(out) if x.startswith("varied (uniform ranges): "))
    assert "vd_SO2 0.5 to 1.5 (multiplier)" in line
    assert "wetness_rule one of met, always_wet (equally likely)" in line


#: Multiplier factors only (no engine factor: one engine run): on the old console the
#: line of the factors was cut inside "gauge_catch 0.9 to 1.1 (multiplier)", its unit
#: alone at the start of the next line.
LINEAR = {"vd_SO2": (0.5, 1.5), "gauge_catch": (0.9, 1.1), "air_conc": (0.85, 1.15),
          "vd_pSO4": (0.6, 1.6), "vd_HNO3": (0.7, 1.4), "precip_conc": (0.95, 1.05)}


def test_the_console_cuts_the_factors_between_whole_items(tiny, tmp_path, capsys):
    """Old code: the line of the factors was wrapped at any space, so a range could
    end a line with its "(multiplier)" at the start of the next.  Now it is cut between
    the items only (each "name low to high unit;" on one line), within 79 columns."""
    from workbench.cli import main
    sc, _, _, _ = tiny
    text = sc.path.read_text()
    head = text.index("[sensitivity.factors]")
    rows = "\n".join(f"{k} = [{lo}, {hi}]" for k, (lo, hi) in LINEAR.items())
    path = sc.path.parent / "scenario_linear.toml"
    path.write_text(text[:head] + "[sensitivity.factors]\n" + rows + "\n")
    capsys.readouterr()
    assert main(["sensitivity", str(path), "--out", str(tmp_path / "s"), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert not [x for x in out.splitlines() if len(x) > 79 and " " in x.strip()], out
    lines = out.splitlines()
    first = next(k for k, x in enumerate(lines) if x.startswith("varied (uniform ranges): "))
    last = next(k for k in range(first + 1, len(lines)) if not lines[k].startswith("  "))
    block = lines[first:last]                         # the line and its continuations
    joined = " ".join(x.strip() for x in block)
    for name, (lo, hi) in LINEAR.items():
        item = f"{name} {lo:g} to {hi:g} (multiplier)"
        assert item in joined, (item, out)                    # every factor said
        assert any(item in x for x in block), (item, out)     # and on one line whole
    # the lines start with a factor's name (or the head), never with its unit
    assert not [x for x in block if x.strip().startswith("(")], out
