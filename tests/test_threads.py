"""The engine's thread setting (workbench.threads): one setting, no effect on numbers.

Nothing here is timed: the tests check the setting's rules, that every item runs
once, that errors and the caller's numpy error state reach the threads, and that a
call from outside the main thread (a dask worker's task) never uses the pool.
"""
import threading

import numpy as np
import pytest

import workbench
import workbench.threads as T


@pytest.fixture(autouse=True)
def _reset(monkeypatch):
    monkeypatch.delenv(T.ENV_VAR, raising=False)
    T.set_threads(None)
    yield
    T.set_threads(None)


def test_default_is_usable_cores_capped():
    assert T.get_threads() == min(T.usable_cores(), T.DEFAULT_MAX_THREADS) >= 1


def test_set_threads_then_environment_then_default(monkeypatch):
    monkeypatch.setenv(T.ENV_VAR, "3")
    assert T.get_threads() == 3
    workbench.set_threads(2)           # the package-level name is the same setting
    assert workbench.get_threads() == T.get_threads() == 2
    workbench.set_threads(None)
    assert T.get_threads() == 3


@pytest.mark.parametrize("bad", [0, -1, 1.5, True, "2"])
def test_set_threads_refuses_non_positive_integers(bad):
    with pytest.raises((ValueError, TypeError)):
        T.set_threads(bad)


@pytest.mark.parametrize("text", ["0", "two", "-3"])
def test_bad_environment_value_is_named(monkeypatch, text):
    monkeypatch.setenv(T.ENV_VAR, text)
    with pytest.raises(ValueError, match=f"{T.ENV_VAR}={text!r}"):
        T.get_threads()


@pytest.mark.parametrize("n", [1, 2, 3])
def test_run_each_runs_every_item_once(n):
    T.set_threads(n)
    seen = []
    lock = threading.Lock()

    def task(i):
        with lock:
            seen.append(i)
    T.run_each(task, 37)
    assert sorted(seen) == list(range(37))


def test_run_each_raises_the_task_error():
    T.set_threads(2)

    def task(i):
        if i == 5:
            raise KeyError("item five")
    with pytest.raises(KeyError, match="item five"):
        T.run_each(task, 20)


def test_threads_see_the_callers_numpy_error_state():
    T.set_threads(3)
    zero = np.zeros(4)

    def task(i):
        np.divide(1.0, zero)
    with np.errstate(divide="raise"):
        with pytest.raises(FloatingPointError):
            T.run_each(task, 6)
    with np.errstate(divide="ignore"):
        T.run_each(task, 6)            # no error, no warning


def test_outside_the_main_thread_one_thread_and_no_pool(monkeypatch):
    """A dask worker runs its tasks outside the main thread: blocks one by one."""
    T.set_threads(4)
    monkeypatch.setattr(T, "_get_pool", lambda n: pytest.fail("pool used off the main thread"))
    got = {}

    def worker():
        got["here"] = T.threads_here()
        names = []
        T.run_each(lambda i: names.append(threading.current_thread().name), 5)
        got["names"] = set(names)
    t = threading.Thread(target=worker, name="not-main")
    t.start()
    t.join()
    assert got == {"here": 1, "names": {"not-main"}}
    assert T.threads_here() == 4       # the main thread keeps the setting


def test_run_each_max_threads_keeps_the_caller(monkeypatch):
    T.set_threads(4)
    monkeypatch.setattr(T, "_get_pool", lambda n: pytest.fail("pool used with max_threads=1"))
    names = []
    T.run_each(lambda i: names.append(threading.current_thread().name), 9, max_threads=1)
    assert names == [threading.current_thread().name] * 9


def test_sharing_marks_the_tasks_of_several_threads_only():
    """``sharing()`` is true inside the tasks of a run on several threads (so that
    the blockwise steps there take the larger blocks), false outside and on one."""
    from workbench.surface import _array
    T.set_threads(2)
    seen = {}

    def task(i):
        seen[i] = (T.sharing(), _array.block_size(1))
    assert not T.sharing()
    T.run_each(task, 4)
    assert all(s == (True, _array.THREAD_BLOCK_ELEMENTS) for s in seen.values())
    assert not T.sharing() and _array.block_size(1) == _array.BLOCK_ELEMENTS
    T.run_each(task, 3, max_threads=1)
    assert seen[0] == (False, _array.BLOCK_ELEMENTS)


# ------------------------------------------------------------ map_ordered (the met reader)
@pytest.mark.parametrize("n", [1, 2, 3])
def test_map_ordered_yields_in_order_with_items_in_flight_bounded(n):
    """Results come in the order of the items whatever order they finish in (later items
    are made faster), and no more items than threads are taken ahead of the caller."""
    import time
    T.set_threads(n)
    taken, flight = [], []

    def items():
        for i in range(12):
            taken.append(i)
            yield i

    def fn(i):
        time.sleep(0.002 * (12 - i))
        return i * i
    out = []
    for r in T.map_ordered(fn, items()):
        flight.append(len(taken) - len(out))
        out.append(r)
    assert out == [i * i for i in range(12)]
    assert max(flight) <= n


def test_map_ordered_stops_early_and_raises_in_order():
    T.set_threads(2)
    done = []

    def fn(i):
        if i == 3:
            raise ValueError("item 3")
        done.append(i)
        return i
    got = []
    with pytest.raises(ValueError, match="item 3"):
        for r in T.map_ordered(fn, range(50)):
            got.append(r)
    assert got == [0, 1, 2]
    assert len(done) < 50                       # the items not started are dropped
    gen = T.map_ordered(lambda i: i, range(100))
    assert next(gen) == 0
    gen.close()                                 # a caller that stops: nothing left running


def test_map_ordered_off_the_main_thread_runs_in_the_caller(monkeypatch):
    T.set_threads(4)
    monkeypatch.setattr(T, "_get_pool", lambda n: pytest.fail("pool used off the main thread"))
    got = {}

    def worker():
        got["r"] = list(T.map_ordered(lambda i: (i, threading.current_thread().name), range(4)))
    t = threading.Thread(target=worker, name="not-main")
    t.start()
    t.join()
    assert got["r"] == [(i, "not-main") for i in range(4)]


def test_bad_environment_value_is_one_line_on_the_command_line(monkeypatch, tmp_path, capsys):
    """`WORKBENCH_THREADS=two workbench run ...` stops with one line (exit 2)
    (docs/engine.md names the variable). Before, its ValueError was taken by the fast met
    reader for a file it could not read (the slow line reader read the met instead,
    silently: this tiny run ended well) and came out later as a traceback (the demo)."""
    import test_budget as tb
    from workbench.cli import main
    scenario = tb._write(tmp_path)
    monkeypatch.setenv(T.ENV_VAR, "two")
    assert main(["run", str(scenario), "--out", str(tmp_path / "run"), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"error: environment variable {T.ENV_VAR}='two'")
    assert "expected a positive integer number of threads" in err
    assert "Traceback" not in err and not (tmp_path / "run").exists()
