"""write_csv writes the bytes of DataFrame.to_csv (the reference is pandas itself)."""
import numpy as np
import pandas as pd
import pytest

from workbench import csvwrite
from workbench.csvwrite import write_csv


def _frame(n=50, seed=0):
    rng = np.random.default_rng(seed)
    x = rng.normal(0.0, 1e3, n) * 10.0 ** rng.integers(-12, 12, n)
    x[::7] = np.nan
    x[1], x[2], x[3] = np.inf, -np.inf, -0.0
    start = pd.to_datetime("2016-01-01") + pd.to_timedelta(rng.integers(0, 10**6, n), "min")
    start = pd.Series(start)
    start[::9] = pd.NaT
    text = rng.choice(["plain", "with, comma", 'a "quote"', "", "line\nbreak", "é ü"], n)
    text = pd.Series(text, dtype=object)
    text[::5] = None
    text[1::11] = np.nan
    passes = pd.Series(rng.random(n) > 0.5, dtype=object)
    passes[::4] = np.nan
    return pd.DataFrame({"site": text, "start": start, "flux": x,
                         "f32": x.astype("float32"), "n": rng.integers(-5, 5000, n),
                         "ok": rng.random(n) > 0.5, "passes": passes,
                         "s": pd.Series(text.fillna("x").to_numpy(), dtype="str"),
                         "mixed": pd.Series([1, 2.5, True, None] * (n // 4) + [None] * (n % 4),
                                            dtype=object)})


@pytest.mark.parametrize("dates", [None, "%Y-%m-%dT%H:%M"])
@pytest.mark.parametrize("chunk", [7, 200_000])
def test_same_bytes_as_to_csv(tmp_path, monkeypatch, dates, chunk):
    monkeypatch.setattr(csvwrite, "CHUNK_CELLS", chunk)
    f = _frame()
    want, got = tmp_path / "want.csv", tmp_path / "got.csv"
    f.to_csv(want, index=False, float_format="%.10g",
             **({"date_format": dates} if dates else {}))
    if dates is None:                    # without a date format: the frame goes to pandas
        f = f.drop(columns="start")
        f.to_csv(want, index=False, float_format="%.10g")

    def refuse(*a, **k):
        raise AssertionError("the fast path fell back to pandas")
    monkeypatch.setattr(pd.DataFrame, "to_csv", refuse)
    write_csv(f, got, "%.10g", dates)
    assert got.read_bytes() == want.read_bytes()


def test_columns_pandas_must_write_fall_back(tmp_path):
    f = _frame(20).assign(nullable=pd.array([1, None] * 10, dtype="Int64"),
                          npscalar=pd.Series([np.float64(0.1)] * 20, dtype=object))
    want, got = tmp_path / "want.csv", tmp_path / "got.csv"
    f.to_csv(want, index=False, float_format="%.10g", date_format="%Y-%m-%d")
    write_csv(f, got, "%.10g", "%Y-%m-%d")
    assert got.read_bytes() == want.read_bytes()
    late = _frame(20)
    late["late"] = pd.Series(["a"] * 19 + [np.float64(2.0)], dtype=object)  # in chunk 2
    late.to_csv(want, index=False, float_format="%.10g", date_format="%Y-%m-%d")
    csvwrite.CHUNK_CELLS, old = 30, csvwrite.CHUNK_CELLS
    try:
        write_csv(late, got, "%.10g", "%Y-%m-%d")
    finally:
        csvwrite.CHUNK_CELLS = old
    assert got.read_bytes() == want.read_bytes()


def test_empty_frame(tmp_path):
    f = _frame().iloc[:0]
    want, got = tmp_path / "want.csv", tmp_path / "got.csv"
    f.to_csv(want, index=False, float_format="%.10g", date_format="%Y")
    write_csv(f, got, "%.10g", "%Y")
    assert got.read_bytes() == want.read_bytes()
