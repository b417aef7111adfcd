"""A transient kaleido failure (its page not ready on a loaded machine) is tried again once."""
import pytest

from workbench.ui import export


class JavascriptError(Exception):
    pass


class _Fig:
    def __init__(self, fails, exc=JavascriptError):
        self.fails, self.calls, self.exc = fails, 0, exc

    def write_image(self, path, **kw):
        self.calls += 1
        if self.calls <= self.fails:
            raise self.exc("ReferenceError: kaleido_scopes is not defined")
        path.write_bytes(b"ok")


def test_one_transient_failure_is_retried(tmp_path):
    fig = _Fig(fails=1)
    export._write_image(fig, tmp_path / "a.png", "png", 600, 400)
    assert fig.calls == 2 and (tmp_path / "a.png").read_bytes() == b"ok"


def test_two_failures_raise(tmp_path):
    fig = _Fig(fails=2)
    with pytest.raises(JavascriptError):
        export._write_image(fig, tmp_path / "a.png", "png", 600, 400)
    assert fig.calls == 2


def test_other_errors_are_not_retried(tmp_path):
    fig = _Fig(fails=1, exc=RuntimeError)        # e.g. no browser found: fail at once
    with pytest.raises(RuntimeError):
        export._write_image(fig, tmp_path / "a.png", "png", 600, 400)
    assert fig.calls == 1
