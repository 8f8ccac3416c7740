"""E-series tables and look-ups, checked against IEC 60063:2015 (tables from memory,
cross-checked against independent public copies of the lists)."""

import math

import pytest
from hypothesis import given, strategies as st

from bandsketch.engine.advise import eseries


def test_series_sizes_and_order():
    # IEC 60063:2015: the series are named for their count of values per decade.
    for name, decade in eseries.SERIES.items():
        assert len(decade) == int(name[1:])
        assert list(decade) == sorted(decade)
        assert decade[0] == 1.0 and decade[-1] < 10.0


def test_e12_is_every_other_e24():
    # IEC 60063:2015: each series is a selection of the next finer one.
    assert eseries.E12 == eseries.E24[::2]


def test_e12_e24_are_not_the_rule():
    # IEC 60063:2015 keeps the historic two-digit values; the rule would give 2.6, 3.2, 4.6,
    # 8.3 for E12 (and 2.9, 3.5, 4.2 for E24 among others). The tables must not be the rule.
    for n, table in ((12, eseries.E12), (24, eseries.E24)):
        rule = tuple(round(10 ** (i / n), 1) for i in range(n))
        differ = {a for a, b in zip(table, rule) if a != b}
        assert {2.7, 3.3, 3.9, 4.7, 8.2} <= differ


@pytest.mark.parametrize("n, table", [(48, eseries.E48), (96, eseries.E96)])
def test_e48_e96_follow_the_rounding_rule(n, table):
    # IEC 60063:2015: E48 and E96 are 10^(i/N) to three significant figures, no exceptions.
    assert eseries.rule_values(n) == table


def test_the_one_exception_is_outside_e96():
    # IEC 60063:2015 lists 9.20 in E192 where the rule gives 9.19 (from memory, cross-checked
    # against public copies). That value sits between E96's 9.09 and 9.31, so E96 is unaffected.
    assert eseries.rule_values(192)[185] == 9.19
    assert 9.19 not in eseries.E96 and 9.20 not in eseries.E96


def test_known_e96_values():
    # Values a designer meets every day in ±1 % parts (IEC 60063:2015 E96).
    for v in (1.00, 2.49, 4.99, 4.75, 6.04, 9.76):
        assert v in eseries.E96


def test_nearest_is_logarithmic():
    # 1.45 lies nearer 1.5 than 1.2 on a ratio scale (and 7.4 nearer 6.8 than 8.2).
    assert eseries.nearest(1.45, "E12") == 1.5
    assert eseries.nearest(7.4e3, "E12") == 6.8e3
    assert eseries.nearest(4.6e-9, "E24") == 4.7e-9
    assert eseries.nearest(100.0, "E96") == 100.0


def test_values_between_are_clean_numbers():
    vals = eseries.values_between("E12", 1e3, 1e4)
    assert vals[0] == 1000.0 and vals[-1] == 10000.0
    assert 4700.0 in vals


@given(st.floats(min_value=1e-13, max_value=1e9), st.sampled_from(sorted(eseries.SERIES)))
def test_nearest_within_half_step(value, series):
    n = int(series[1:])
    got = eseries.nearest(value, series)
    # The historic E12/E24 steps are uneven, up to about 1.5 nominal steps (3.3 -> 3.9 in E12).
    assert abs(math.log10(got / value)) <= 0.75 / n + 1e-9


def test_nearest_meeting_walks_in_the_right_direction():
    # A target met by any value >= 5.0e3: E12 gives 5.6k; met by values <= 5.0e3: 4.7k.
    assert eseries.nearest_meeting(5.0e3, "E12", lambda x: x >= 5.0e3, +1) == 5.6e3
    assert eseries.nearest_meeting(5.0e3, "E12", lambda x: x <= 5.0e3, -1) == 4.7e3
    # An exact series value that meets counts.
    assert eseries.nearest_meeting(4.7e3, "E12", lambda x: x >= 4.7e3, +1) == 4.7e3
    # The first candidate fails (the target is met only beyond 6k): step on to 6.8k.
    assert eseries.nearest_meeting(5.0e3, "E12", lambda x: x >= 6.0e3, +1) == 6.8e3
    assert eseries.nearest_meeting(5.0e3, "E12", lambda x: False, +1) is None


def test_bad_input_is_named():
    with pytest.raises(ValueError, match="E7"):
        eseries.nearest(1.0, "E7")
    with pytest.raises(ValueError, match="positive"):
        eseries.nearest(-1.0, "E12")


# -- stepping a value along its series (the value scrub) ---------------------------------

def test_steps_walk_the_e24_table_across_decades():
    # IEC 60063:2015 E24, written out: 8.2k, 9.1k, 10k, 11k, 12k.
    assert eseries.step_value(8200, 1, "E24") == 9100
    assert eseries.step_value(9100, 1, "E24") == 10000
    assert eseries.step_value(8200, 4, "E24") == 12000
    assert eseries.step_value(12000, -4, "E24") == 8200


def test_a_value_between_series_values_goes_to_its_neighbour_first():
    # E6 (IEC 60063:2015): 1.5, 2.2, 3.3. A typed 2.7 µF is between 2.2 and 3.3 µF.
    assert eseries.step_value(2.7e-6, 1, "E6") == pytest.approx(3.3e-6, rel=1e-12)
    assert eseries.step_value(2.7e-6, -1, "E6") == pytest.approx(2.2e-6, rel=1e-12)
    assert eseries.step_value(2.7e-6, -2, "E6") == pytest.approx(1.5e-6, rel=1e-12)


def test_without_a_series_steps_are_equal_ratios():
    # 24 steps a decade: each is 10^(1/24) (closed form), to three significant figures.
    up = eseries.step_value(100.0, 1)
    assert up == 110.0  # 100 · 10^(1/24) = 110.07 → 110
    assert eseries.step_value(100.0, 24) == 1000.0
    assert eseries.step_value(up, -1) == 100.0


def test_decade_steps_keep_the_mantissa_and_the_sign():
    assert eseries.step_value(4753.0, 1, "E24", decade=True) == 47530.0
    assert eseries.step_value(4753.0, -2, decade=True) == 47.53
    assert eseries.step_value(-5.0, 1) == -5.11  # a negative rail grows in size: 5 · 10^(1/24)


@given(st.floats(1e-12, 1e9), st.sampled_from(list(eseries.SERIES)))
def test_a_step_up_then_down_lands_on_the_series(value, series):
    up = eseries.step_value(value, 1, series)
    assert up > value
    back = eseries.step_value(up, -1, series)
    assert back < up and eseries.nearest(back, series) == pytest.approx(back, rel=1e-12)
    assert eseries.step_value(back, 1, series) == pytest.approx(up, rel=1e-12)
