"""Hour of day of the diurnal figures at whole and fractional UTC offsets: the hour as
measured on the site's clock (worked by hand)."""
import numpy as np
import pytest

from workbench.ui.summaries import local_hour_and_season


@pytest.mark.parametrize("offset, hour_end_utc, measured_local_hour", [
    # whole offsets: the hour ending 10:00 UTC is 10:00-11:00 local at +1 h
    (1.0, "2021-06-01T10:00", 10), (0.0, "2021-06-01T01:00", 0), (-5.0, "2021-06-01T15:00", 9),
    # +9.5 h: measured 09:00-10:00 local = 23:30-00:30 UTC, moved 30 min later to the hour
    # ending 01:00 UTC (docs/data_formats.md, met section): shown at 9
    (9.5, "2021-06-01T01:00", 9),
    # +5.75 h: measured 09:00-10:00 local = 03:15-04:15 UTC, moved 15 min earlier to the
    # hour ending 04:00 UTC
    (5.75, "2021-06-01T04:00", 9),
    # -3.5 h: measured 09:00-10:00 local = 12:30-13:30 UTC, moved to the hour ending 14:00
    (-3.5, "2021-06-01T14:00", 9),
])
def test_hour_of_day_is_the_hour_measured(offset, hour_end_utc, measured_local_hour):
    hour, season = local_hour_and_season(np.array([hour_end_utc], "datetime64[ns]"), offset)
    assert hour[0] == measured_local_hour and season[0] == "JJA"


def test_a_day_gives_each_hour_once_at_a_fractional_offset():
    t = np.arange(np.datetime64("2021-06-01T01:00"), np.datetime64("2021-06-02T01:00"),
                  np.timedelta64(1, "h")).astype("datetime64[ns]")
    for off in (9.5, 5.75, -3.5, 1.0):
        hour, _ = local_hour_and_season(t, off)
        assert sorted(hour.tolist()) == list(range(24)), off
