"""Tests for bandsketch.engine.core.values: reading typed component values and writing them back."""

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bandsketch.engine.core.errors import BadValueError
from bandsketch.engine.core.values import SI_PREFIXES, format_value, parse_value

UNITS = ["Ω", "F", "H", "S", "A/V", "V/V", "A/A", "V", "A", "Hz", "K"]


# Source: IEC 60062:2016, RKM code examples; value from memory.
@pytest.mark.parametrize(
    ("code", "expected"),
    [
        ("4K7", 4700.0),
        ("2n2", 2.2e-9),
        ("R47", 0.47),
        ("4M7", 4.7e6),
        ("47K3", 47300.0),
        ("4u7", 4.7e-6),
        ("1R0", 1.0),
        ("0R1", 0.1),
        ("4R7", 4.7),
        ("47R", 47.0),
    ],
)
def test_rkm_codes(code, expected):
    assert parse_value(code) == expected


# Source: BIPM, The International System of Units (SI brochure), 9th ed., 2019, table 7.
BIPM_PREFIXES = {"f": 1e-15, "p": 1e-12, "n": 1e-9, "µ": 1e-6, "m": 1e-3, "k": 1e3, "M": 1e6, "G": 1e9, "T": 1e12}


def test_si_prefix_table():
    # Source: BIPM SI brochure, 9th ed., 2019, table 7 (femto to tera).
    assert SI_PREFIXES == BIPM_PREFIXES


@pytest.mark.parametrize(("symbol", "factor"), BIPM_PREFIXES.items())
def test_si_prefixes_parse(symbol, factor):
    # Source: BIPM SI brochure, 9th ed., 2019, table 7.
    assert parse_value(f"1{symbol}") == factor
    assert parse_value(f"4.7 {symbol}") == pytest.approx(4.7 * factor, rel=1e-15)


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        # Source: BIPM SI brochure, 9th ed., 2019, table 7 (micro, kilo, mega),
        # with the spellings Bandsketch also accepts for them.
        ("100u", 1e-4),
        ("1.5 μ", 1.5e-6),  # U+03BC GREEK SMALL LETTER MU
        ("1.5 µ", 1.5e-6),  # U+00B5 MICRO SIGN
        ("4.7K", 4700.0),
        ("1meg", 1e6),
        ("1MEG", 1e6),
    ],
)
def test_prefix_spellings(text, expected):
    assert parse_value(text) == expected


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        # Source: Bandsketch value-entry rules (parse_value docstring).
        ("4700", 4700.0),
        ("4.7e3", 4700.0),
        ("1E-9", 1e-9),
        (".5", 0.5),
        ("+3", 3.0),
        ("  4.7k\t", 4700.0),
        ("4.7 k", 4700.0),
        ("10M", 1e7),
        ("1.5m", 1.5e-3),
        ("2.2n", 2.2e-9),
        (4700, 4700.0),
        (2.2e-9, 2.2e-9),
    ],
)
def test_plain_numbers(text, expected):
    result = parse_value(text)
    assert type(result) is float
    assert result == expected


@pytest.mark.parametrize(
    ("text", "unit", "expected"),
    [
        # Source: BIPM SI brochure, 9th ed., 2019, tables 4 and 7 (unit symbols, prefixes).
        ("4.7 kΩ", "Ω", 4700.0),  # U+03A9 GREEK CAPITAL LETTER OMEGA
        ("4.7kΩ", "Ω", 4700.0),  # U+2126 OHM SIGN
        ("4k7 ohms", "Ω", 4700.0),
        ("470 ohm", "Ω", 470.0),
        ("4R7", "Ω", 4.7),
        ("2.2nF", "F", 2.2e-9),
        ("1 fF", "F", 1e-15),
        ("10 µH", "H", 1e-5),
        ("10mS", "S", 0.01),
        ("40 mA/V", "A/V", 0.04),
        ("100 V/V", "V/V", 100.0),
        ("150 A/A", "A/A", 150.0),
        ("12 V", "V", 12.0),
        ("1.2 mA", "A", 1.2e-3),
        ("1 MHz", "Hz", 1e6),
        ("4.7k", "Ω", 4700.0),
        ("2.2nF", None, 2.2e-9),
    ],
)
def test_units(text, unit, expected):
    assert parse_value(text, unit=unit) == expected


def test_siemens_is_ampere_per_volt():
    # Source: BIPM SI brochure, 9th ed., 2019, table 4: S = A/V.
    assert parse_value("40 mS", unit="A/V") == 0.04
    assert parse_value("40 mA/V", unit="S") == 0.04


def test_trailing_k_in_a_kelvin_field_is_kelvin():
    # Source: Bandsketch value-entry rules (parse_value docstring): a lone K is
    # kelvin only where the field takes kelvins.
    assert parse_value("300K", unit="K") == 300.0
    assert parse_value("300 K", unit="K") == 300.0
    assert parse_value("300", unit="K") == 300.0
    assert parse_value("3 kK", unit="K") == 3000.0
    assert parse_value("300K", unit="Ω") == 300e3
    assert parse_value("300K") == 300e3


def test_flags():
    # Source: Bandsketch value-entry rules (parse_value docstring).
    assert parse_value("0", allow_zero=True) == 0.0
    assert math.copysign(1.0, parse_value("-0", allow_zero=True)) == 1.0
    assert parse_value("-1k", allow_negative=True) == -1000.0
    assert parse_value("−1k", allow_negative=True) == -1000.0  # U+2212 MINUS SIGN
    assert parse_value("inf", allow_infinite=True) == math.inf
    assert parse_value("∞", allow_infinite=True) == math.inf
    assert parse_value("∞ Ω", unit="Ω", allow_infinite=True) == math.inf
    assert parse_value("-inf", allow_infinite=True, allow_negative=True) == -math.inf
    assert parse_value(math.inf, allow_infinite=True) == math.inf


# Source: Bandsketch value-entry rules (parse_value docstring); the float
# limits are IEEE 754-2019 binary64: largest finite about 1.8e308, smallest
# normal 2**-1022, about 2.2e-308.
BAD_INPUTS = [
    ("", {}, "is empty"),
    ("   ", {}, "is empty"),
    ("4k7k", {}, "'4k7k' is not a value; write e.g. 4k7, 4.7k or 4700"),
    ("1..2", {}, "is not a value"),
    ("k", {}, "is not a value"),
    ("R", {}, "is not a value"),
    ("nan", {}, "is not a value"),
    ("inf", {}, "must be finite"),
    ("∞", {}, "must be finite"),
    ("1e999", {}, "is too large"),
    ("1e999", {"allow_infinite": True}, "is too large"),
    ("1e308k", {}, "is too large"),
    ("-1k", {}, "'-1k' must be positive"),
    ("-1k", {"allow_zero": True}, "must be zero or positive"),
    ("-inf", {"allow_infinite": True}, "must be positive"),
    ("0", {}, "must be greater than zero"),
    ("0.000", {}, "must be greater than zero"),
    ("1e-400", {}, "is too small to be used"),
    ("1e-400", {"allow_zero": True}, "is too small to be used"),
    ("1e-320", {}, "is too small to be used"),
    ("4,7k", {}, "has a comma"),
    ("4.7nH", {"unit": "F"}, "'4.7nH' is in henries but this field takes farads"),
    ("4R7", {"unit": "F"}, "is in ohms but this field takes farads"),
    ("4R7F", {}, "is not a value"),
    ("100 V/V", {"unit": "A/A"}, "is in volts per volt but this field takes amperes per ampere"),
    ("1 mhz", {}, "is not a value"),
    (math.nan, {}, "is not a value"),
    (math.inf, {}, "must be finite"),
    (-math.inf, {}, "must be finite"),
    (5e-324, {}, "is too small to be used"),
    (10**400, {}, "is too large"),
    (0, {}, "must be greater than zero"),
    (-2.0, {}, "must be positive"),
    (True, {}, "'True' is a bool, not a number or text"),
    (None, {}, "is a NoneType, not a number or text"),
    ([4700], {}, "is a list, not a number or text"),
]


@pytest.mark.parametrize(("text", "kwargs", "fragment"), BAD_INPUTS)
def test_bad_inputs(text, kwargs, fragment):
    with pytest.raises(BadValueError) as caught:
        parse_value(text, part="R1", field="value", **kwargs)
    error = caught.value
    assert error.message.startswith("R1 value")
    assert fragment in error.message
    assert (error.part, error.field, error.parts) == ("R1", "value", ("R1",))


def test_comma_message_says_to_use_a_point():
    # Source: Bandsketch value-entry rules (parse_value docstring).
    with pytest.raises(BadValueError, match="decimal point as a point"):
        parse_value("4,7k", part="R1", field="value")


def test_error_keeps_the_typed_text():
    # Source: engine/errors.py, BadValueError.text is the text as typed.
    with pytest.raises(BadValueError) as caught:
        parse_value(" 4k7k ", part="R1", field="value")
    assert caught.value.text == " 4k7k "


def test_message_without_part_or_field():
    # Source: Bandsketch value-entry rules: an unnamed field is called "value".
    with pytest.raises(BadValueError, match=r"^value: '4k7k' is not a value"):
        parse_value("4k7k")
    with pytest.raises(BadValueError, match=r"^Q1 gm: '-40m' must be positive"):
        parse_value("-40m", part="Q1", field="gm")


def test_long_text_is_shortened_in_the_message():
    # Source: Bandsketch value-entry rules: messages stay one readable line.
    with pytest.raises(BadValueError) as caught:
        parse_value("1" * 500 + "x", part="R1", field="value")
    assert len(caught.value.message) < 120


def test_unknown_field_unit_is_a_programming_error():
    # Source: Bandsketch value-entry rules (parse_value docstring).
    with pytest.raises(ValueError, match="unknown unit") as caught:
        parse_value("1", unit="furlong")
    assert not isinstance(caught.value, BadValueError)


@pytest.mark.parametrize(
    ("args", "expected"),
    [
        # Source: Bandsketch display rules (format_value docstring); prefixes
        # from BIPM SI brochure, 9th ed., 2019, table 7.
        ((4700, "Ω"), "4.7 kΩ"),
        ((2.2e-9, "F"), "2.2 nF"),
        ((1e6, "Hz"), "1 MHz"),
        ((0.0, "V"), "0 V"),
        ((-0.0, "V"), "0 V"),
        ((-0.0123, "S"), "\u221212.3 mS"),  # the minus sign U+2212 (ISO 80000-1, 7.1.3; from memory)
        ((123456, "Ω", 3), "123 kΩ"),
        ((123456, "Ω", 2), "120 kΩ"),
        ((999.96, "Ω"), "1 kΩ"),
        ((4.7e-6, "F"), "4.7 µF"),
        ((1e-15, "F"), "1 fF"),
        ((999e12, "Hz"), "999 THz"),
        ((1e-18, "F"), "1e-18 F"),
        ((2.5e15, "Hz"), "2.5e+15 Hz"),
        ((math.inf, "Ω"), "∞ Ω"),
        ((-math.inf, "Ω"), "\u2212∞ Ω"),
        ((-1e5, "V/A"), "\u2212100 kΩ"),  # a transimpedance reads in ohms (SI brochure, BIPM 2019)
        ((math.nan, "Ω"), "nan"),
        ((4700, ""), "4.7k"),
        ((47,), "47"),
        ((0.1, "V"), "100 mV"),
    ],
)
def test_format_value(args, expected):
    assert format_value(*args) == expected


def test_format_uses_micro_sign():
    # Source: Bandsketch display rules: micro is written U+00B5 MICRO SIGN.
    assert format_value(1e-6, "F") == "1 \u00b5F"


def test_format_rejects_zero_digits():
    # Source: Bandsketch display rules (format_value docstring).
    with pytest.raises(ValueError):
        format_value(1.0, "V", digits=0)


# Source: Bandsketch value-entry rules: what format_value writes, parse_value reads back.
@settings(max_examples=500, deadline=None)
@given(
    x=st.floats(min_value=1e-15, max_value=1e13, allow_nan=False, allow_infinity=False),
    unit=st.sampled_from(UNITS + [""]),
)
def test_round_trip(x, unit):
    text = format_value(x, unit, digits=12)
    assert parse_value(text, unit=unit or None) == pytest.approx(x, rel=1e-10)


# Source: Bandsketch value-entry rules: any text yields a float or a BadValueError.
@settings(max_examples=1000, deadline=None)
@given(
    text=st.one_of(st.text(), st.text(alphabet="0123456789 .,+-eEkKmMRfpnuµμGTΩΩFHSVAzhmoif∞/")),
    unit=st.sampled_from(UNITS + [None]),
    flags=st.fixed_dictionaries(
        {name: st.booleans() for name in ("allow_zero", "allow_negative", "allow_infinite")}
    ),
)
def test_any_text_gives_a_float_or_bad_value_error(text, unit, flags):
    try:
        result = parse_value(text, unit=unit, part="R1", field="value", **flags)
    except BadValueError as error:
        assert "R1 value" in error.message
    else:
        assert isinstance(result, float)
        assert not math.isnan(result)


def test_squared_units_take_an_exponent_not_a_prefix():
    # An SI prefix applies to the unit before its power (BIPM SI brochure, 9th ed., 2019,
    # section 3: "1 cm³ = (10⁻² m)³"), so b2 in s² must not read "47.7 fs²".
    assert format_value(4.77e-14, "s²") == "4.77e-14 s²"
    assert format_value(2.5e-9, "s") == "2.5 ns"


@pytest.mark.parametrize("gain, unit, text", [
    (0.8966, "V/V", "0.897 V/V"), (-107.4, "V/V", "\u2212107 V/V"), (1234.5, "V/V", "1230 V/V"),
    (-98765.0, "V/V", "\u221298800 V/V"), (-1e5, "V/A", "\u2212100 kΩ")])
def test_a_gain_reads_as_a_plain_ratio_or_in_ohms(gain, unit, text):
    # A voltage gain is a ratio (no milli or kilo on V/V, and no exponent either); V/A is Ω
    # (SI brochure, BIPM 2019: the ohm is the volt per ampere).
    from bandsketch.engine.core.values import format_gain
    assert format_gain(gain, unit) == text


def test_the_follower_samples_figures_read_as_plain_ratios():
    # Its |A_m| is 0.897: the targets, the step's final value and the advice say "0.897 V/V",
    # never "897 mV/V" (common practice, no source).
    from bandsketch.engine import analyze, design_to_circuit, load_sample
    from bandsketch.engine.advise.targets import check_targets, parse_targets
    from bandsketch.engine.present.stepdata import step_data
    doc = load_sample("follower_cable_driver")
    a = analyze(design_to_circuit(doc))
    texts = [c.text for c in check_targets(parse_targets(doc.targets), a)]
    texts.append(step_data(a.step_response()).final_text)
    assert all("mV/V" not in t for t in texts) and any("0.897 V/V" in t for t in texts)
