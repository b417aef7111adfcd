"""Reset clears the message of an earlier save or export (seen in the browser: after
"Reset to scenario" the red "not exported: ... tick 'overwrite'" stayed on screen,
about settings no longer in force)."""
import html
import warnings

import pytest

pytestmark = pytest.mark.filterwarnings("ignore::RuntimeWarning")


@pytest.fixture(scope="module")
def app(session):
    from workbench.ui.apps import SiteExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return SiteExplorer(session, site="ridge", years=(2021, 2021))


def test_reset_clears_a_refused_export(app, monkeypatch, tmp_path):
    monkeypatch.setenv("WORKBENCH_OUTPUT", str(tmp_path))
    (tmp_path / "run").mkdir()
    (tmp_path / "run" / "old.txt").write_text("x")
    app.controls["fixed_velocity.SO2"].value = 0.9
    with pytest.raises(Exception):
        app.export_run("run")
    assert "not exported" in html.unescape(app.message_w.value)
    app.reset()
    assert app.message_w.value == ""
    assert app.controls["fixed_velocity.SO2"].value is None      # reset did its work too


def test_reset_clears_a_refused_save(app, monkeypatch, tmp_path):
    monkeypatch.setenv("WORKBENCH_OUTPUT", str(tmp_path))
    (tmp_path / "a_folder.toml").mkdir()              # a folder where the file should go
    with pytest.raises(Exception):
        app.save_scenario("a_folder.toml")
    assert "not saved" in html.unescape(app.message_w.value)
    app.reset()
    assert app.message_w.value == ""
