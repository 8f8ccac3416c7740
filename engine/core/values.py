"""Reading and writing component values as engineers type them.

``parse_value`` turns text such as ``"4.7k"``, ``"4K7"``, ``"2.2 nF"`` or
``"R47"`` into a float in SI base units; ``format_value`` writes a float back
with an engineering prefix (``4700`` -> ``"4.7 kΩ"``).
"""

from __future__ import annotations

import math
import re
import unicodedata
from functools import lru_cache

from .errors import BadValueError

_EXPONENTS = {"f": -15, "p": -12, "n": -9, "µ": -6, "m": -3, "k": 3, "M": 6, "G": 9, "T": 12}

SI_PREFIXES = {symbol: float(f"1e{e}") for symbol, e in _EXPONENTS.items()}
"""SI prefix symbols from femto to tera and their factors (micro is U+00B5)."""

_PREFIX_AT = {0: "", **{e: symbol for symbol, e in _EXPONENTS.items()}}

# NFKC folds U+00B5 MICRO SIGN to U+03BC and U+2126 OHM SIGN to U+03A9, so
# only the folded forms need listing.  "R" is the IEC 60062 ohm code letter.
_PARSE_EXPONENTS = {**_EXPONENTS, "μ": -6, "u": -6, "K": 3, "meg": 6, "R": 0}

_UNIT_NAMES = {
    "Ω": "ohms",
    "F": "farads",
    "H": "henries",
    "S": "siemens",
    "A/V": "amperes per volt",
    "V/V": "volts per volt",
    "A/A": "amperes per ampere",
    "V": "volts",
    "A": "amperes",
    "Hz": "hertz",
    "K": "kelvins",
    # Fields whose unit cannot be typed after the number: a ratio (β), λ and the
    # large-signal model constants.
    "": "no unit",
    "1/V": "per volt",
    "s": "seconds",
    "A/V2": "amperes per volt squared",  # A/V², as NFKC folds it
    "√V": "square-root volts",
    "m": "metres",
    "F/m2": "farads per square metre",  # F/m², as NFKC folds it
    "F/m": "farads per metre",
}
UNITS = frozenset(_UNIT_NAMES)
"""The units the value parser knows (a unit written in a text is checked against them); the one
table the parser, the design schema, the advisor and the app read. A field in another unit
(°C, %) is parsed unit-free."""
# Siemens and amperes per volt are the same unit; a gm field takes either.
_QUANTITY = {symbol: symbol for symbol in _UNIT_NAMES} | {"S": "A/V"}

_EXAMPLE = "write e.g. 4k7, 4.7k or 4700"
_SMALLEST_NORMAL = 2.0**-1022
SMALLEST = 1e-24
LARGEST = 1e24
"""The magnitudes a value may have (yocto to yotta; zero and, where allowed, infinity apart).
Within them the engine's equations stay inside double precision for any mix of parts (the
products it forms, such as ω·R·C over a sweep or b₂ = ΣCᵢCⱼ(ZᵢᵢZⱼⱼ − ZᵢⱼZⱼᵢ), neither overflow
nor underflow); beyond them a value is refused where it is typed, not by a failing solve."""
_LONGEST_SHOWN = 40  # characters of the user's text quoted in a message

_UNIT_PATTERN = r"(?i:ohms?)|Ω|A/V|V/V|A/A|Hz|[FHSVAK]"
_VALUE = re.compile(
    rf"""
    (?P<sign>[+-]?)
    (?:
        (?P<inf>(?i:inf(?:inity)?)|∞)
      | (?=\.?[0-9])(?P<int>[0-9]*)(?:\.(?P<frac>[0-9]*))?
        (?:[eE](?P<exp>[+-]?[0-9]+))?
        \s*(?P<prefix>(?i:meg)|[RfpnuμmkKMGT])?
      | (?P<rkm_int>[0-9]*)(?P<code>[RfpnuμmkKMGT])(?P<rkm_frac>[0-9]+)
    )
    \s*(?P<unit>{_UNIT_PATTERN})?
    """,
    re.VERBOSE,
)


def parse_value(
    text,
    *,
    unit=None,
    part=None,
    field=None,
    allow_zero=False,
    allow_negative=False,
    allow_infinite=False,
) -> float:
    """Read a value typed into a part's field.

    Parameters
    ----------
    text : str, int or float
        A number such as ``4700``, or text in any of these forms:
        plain or exponent notation (``"4700"``, ``"4.7e3"``, ``".5"``);
        a number with an SI prefix f p n u µ m k K M G T or ``meg``
        (``"4.7k"``, ``"2.2 n"``, ``"1meg"``); an IEC 60062 code where the
        prefix letter, or R for ohms, stands for the decimal point
        (``"4K7"``, ``"2n2"``, ``"R47"``).  Any of these may end in a unit
        (``"4.7 kΩ"``, ``"2.2nF"``, ``"40mA/V"``).
    unit : str, optional
        The unit the field takes: one of Ω, F, H, S, A/V, V/V, A/A, V, A,
        Hz, K.  A unit written in the text must agree with it (S and A/V
        agree).  When it is ``"K"`` a trailing lone K means kelvin, not
        kilo.  None accepts any unit.
    part : str, optional
        The part's name, for the error message (``"R1"``).
    field : str, optional
        The field's name, for the error message; ``"value"`` if None.
    allow_zero, allow_negative, allow_infinite : bool
        Whether zero, negative values and infinity (``"inf"``, ``"∞"``) are
        acceptable.

    Returns
    -------
    float
        The value in the unit's SI base unit (ohms, farads, ...): ``"4.7k"``
        gives 4700.0, ``"2.2nF"`` gives 2.2e-9.

    Raises
    ------
    BadValueError
        If the text is not a value, is finite but outside :data:`SMALLEST` to
        :data:`LARGEST` in size, carries the wrong unit, or is zero, negative or
        infinite when not allowed.
        The message names the part and field and says what to write.
    ValueError
        If `unit` is not one of the units listed above.
    """
    if unit is not None:
        unit = unicodedata.normalize("NFKC", unit)
        if unit not in _UNIT_NAMES:
            raise ValueError(f"unknown unit {unit!r}; use one of {', '.join(_UNIT_NAMES)}")
    label = f"{part} {field or 'value'}" if part else field or "value"
    shown = text.strip() if isinstance(text, str) else repr(text)
    if len(shown) > _LONGEST_SHOWN:
        shown = shown[: _LONGEST_SHOWN - 3] + "..."

    def bad(problem):
        quoted = f": '{shown}'" if shown else ""
        return BadValueError(
            f"{label}{quoted} {problem}",
            part=part,
            field=field,
            text=text if isinstance(text, str) else shown,
        )

    if isinstance(text, str):
        value, underflowed = _read_text(text, unit, bad)
    elif isinstance(text, (int, float)) and not isinstance(text, bool):
        try:
            value = float(text)
        except OverflowError:
            raise bad("is too large") from None
        if math.isnan(value):
            raise bad("is not a value")
        underflowed = False
    else:
        raise bad(f"is a {type(text).__name__}, not a number or text")

    if math.isinf(value) and not allow_infinite:
        raise bad("must be finite")
    if value < 0 and not allow_negative:
        raise bad("must be zero or positive" if allow_zero else "must be positive")
    if underflowed or 0 < abs(value) < _SMALLEST_NORMAL:
        raise bad("is too small to be used")
    if value == 0:
        if not allow_zero:
            raise bad("must be greater than zero")
        return 0.0  # not -0.0, which would print as "-0"
    if not math.isinf(value) and not SMALLEST <= abs(value) <= LARGEST:
        raise bad(f"is outside {SMALLEST:g} to {LARGEST:g} in size, the range a value may have "
                  "(beyond it the equations would leave what double precision carries)")
    return value


def _read_text(text, unit, bad):
    """Convert typed text to a float; return it and whether it underflowed to zero.

    `bad` makes the BadValueError to raise from a description of the problem.
    """
    stripped = text.strip()
    if not stripped:
        raise bad(f"is empty; {_EXAMPLE}")
    if "," in stripped:
        raise bad("has a comma; write the decimal point as a point, e.g. 4.7k")
    # U+2212 MINUS SIGN is what text copied from a datasheet usually carries.
    match = _VALUE.fullmatch(unicodedata.normalize("NFKC", stripped).replace("\u2212", "-"))
    if match is None:
        raise bad(f"is not a value; {_EXAMPLE}")

    written_unit = match["unit"]
    if written_unit and written_unit.lower().startswith("ohm"):
        written_unit = "Ω"
    letter = match["prefix"] or match["code"]
    if letter and letter.lower() == "meg":
        letter = "meg"
    if unit == "K" and match["prefix"] == "K" and not written_unit:
        letter, written_unit = None, "K"
    if letter == "R":
        if written_unit not in (None, "Ω"):
            raise bad(f"is not a value; {_EXAMPLE}")
        written_unit = "Ω"
    if written_unit and unit is not None and _QUANTITY[written_unit] != _QUANTITY[unit]:
        raise bad(f"is in {_UNIT_NAMES[written_unit]} but this field takes {_UNIT_NAMES[unit]}")

    if match["inf"]:
        return (-math.inf if match["sign"] == "-" else math.inf), False
    if match["code"]:
        integer, fraction, exponent = match["rkm_int"], match["rkm_frac"], 0
    else:
        integer, fraction, exponent = match["int"], match["frac"], _exponent(match["exp"])
    if letter:
        exponent += _PARSE_EXPONENTS[letter]
    # Rebuilding one decimal literal lets float() round once, so "2n2" is
    # exactly the float 2.2e-9 rather than 2.2 * 1e-9.
    value = float(f"{match['sign']}{integer or 0}.{fraction or 0}e{exponent}")
    if math.isinf(value):
        raise bad("is too large")
    underflowed = value == 0 and any(digit in "123456789" for digit in integer + (fraction or ""))
    return value, underflowed


def _exponent(literal):
    """The value of an exponent such as ``"-9"``, capped far beyond float range.

    The cap keeps ``int`` away from its limit on digit count, which a
    pasted run of thousands of digits would otherwise exceed.
    """
    if not literal:
        return 0
    digits = literal.lstrip("+-").lstrip("0")
    magnitude = int(digits or 0) if len(digits) <= 6 else 10**7
    return -magnitude if literal.startswith("-") else magnitude


def format_value(x: float, unit: str = "", digits: int = 3) -> str:
    """Write a value with an engineering prefix, as ``parse_value`` reads it.

    Parameters
    ----------
    x : float
        The value in the unit's SI base unit (ohms, farads, hertz, ...).
    unit : str, optional
        The unit symbol to append (``"Ω"``, ``"F"``); none if empty. A per-volt value keeps
        its prefix apart from the unit (``"20m /V"``), which would otherwise read as millivolts;
        ``"V/A"`` (a transimpedance) is written ``"Ω"``.
    digits : int, optional
        Significant figures to keep; trailing zeros are dropped.

    Returns
    -------
    str
        E.g. ``"4.7 kΩ"`` for 4700 ohms, ``"2.2 nF"``, ``"4.7k"`` with no
        unit; a negative value starts with the minus sign U+2212 (``"−42 V"``; machine outputs,
        CSV and JSON, write numbers, with ``-``).  Values outside femto to tera, and values in a squared or cubed
        unit, use exponent form (``"1e-18 F"``, ``"4.77e-14 s²"``; ``"19.6 mA/V²"`` keeps its prefix); infinity is ``"∞ Ω"`` and NaN is ``"nan"``.

    Raises
    ------
    ValueError
        If `digits` is less than 1.
    """
    if digits < 1:
        raise ValueError(f"digits must be at least 1, not {digits}")
    return _written(float(x), unit, digits)


@lru_cache(maxsize=4096)
def _written(x: float, unit: str, digits: int) -> str:
    # Kept: the views write the same values again at every edit (the parts' own, the corners
    # that did not move), about a hundred and fifty a time.
    if unit == "1/V":
        return f"{_written(x, '', digits)} /V"
    if unit == "V/A":
        unit = "Ω"  # a transimpedance: V/A is the ohm, and reads as one everywhere
    if math.isnan(x):
        return "nan"
    space = " " if unit else ""
    sign = MINUS if x < 0 else ""
    if math.isinf(x):
        return f"{sign}∞{space}{unit}"
    if x == 0:
        return f"0{space}{unit}"

    # Rounding first decides the exponent, so 999.96 becomes 1.00e+03 and
    # takes the "k" prefix instead of printing as "1000".
    mantissa, exponent = f"{abs(x):.{digits - 1}e}".split("e")
    exponent = int(exponent)
    significant = mantissa.replace(".", "")
    engineering = 3 * math.floor(exponent / 3)
    # A prefix binds to the unit before its power (1 fs² is 1e-30 s²), which few readers
    # expect, so a squared or cubed unit is written with an exponent instead; a power under a
    # slash is not the prefixed unit's (19.6 mA/V² reads as meant).
    powered = unit[-1:] in ("²", "³") and "/" not in unit
    prefix = None if powered else _PREFIX_AT.get(engineering)
    if prefix is None:
        return f"{sign}{_strip_zeros(mantissa)}e{exponent:+03d}{space}{unit}"
    point = exponent - engineering + 1
    significant = significant.ljust(point, "0")
    number = _strip_zeros(f"{significant[:point]}.{significant[point:]}")
    return f"{sign}{number}{space}{prefix}{unit}"


MINUS = "\u2212"
"""The minus sign of every value written for people (the window, the report, the tables)."""


def format_signed(x: float, decimals: int = 3) -> str:
    """A signed figure with its sign always written, the minus as U+2212: ``"+0.771"``, ``"−0.929"``.

    Parameters
    ----------
    x : float
        The figure (dimensionless: a sensitivity, a ratio).
    decimals : int, optional
        Digits after the point (a count, dimensionless).
    """
    return f"{x:+.{decimals}f}".replace("-", MINUS)


def format_gain(gain: float, gain_unit: str, digits: int = 3) -> str:
    """Write a gain in its unit: a voltage gain as a plain ratio (``"−42.3 V/V"``, ``"0.895 V/V"``,
    not ``"895 mV/V"``), a transimpedance in ohms (``"−100 kΩ"``: V/A is Ω).

    Parameters
    ----------
    gain : float
        The gain, signed, in the gain unit (V/V or V/A).
    gain_unit : str
        ``"V/V"``, or ``"V/A"`` for a current input.
    digits : int, optional
        Significant figures (a count, dimensionless).
    """
    if gain_unit == "V/V" and 1e-3 <= abs(gain) < 1e6:
        if abs(gain) >= 10 ** digits:
            # "1230 V/V", not the "1.23e+03 V/V" the g format would write.
            gain = round(gain, digits - 1 - math.floor(math.log10(abs(gain))))
            return f"{gain:.0f} V/V".replace("-", MINUS)
        return f"{gain:.{digits}g} V/V".replace("-", MINUS)
    return format_value(gain, gain_unit, digits)


def _strip_zeros(number):
    """Drop trailing zeros after the decimal point, and the point if bare."""
    return number.rstrip("0").rstrip(".") if "." in number else number


def db_unit(gain_unit: str) -> str:
    """What 20·log10|H| is in.

    Parameters
    ----------
    gain_unit : str
        The gain's unit: ``"V/V"`` for a voltage input, ``"V/A"`` for a current input.

    Returns
    -------
    str
        ``"dBΩ"`` for a V/A transimpedance, ``"dB"`` otherwise.
    """
    return "dBΩ" if gain_unit == "V/A" else "dB"


def error_text(estimate: float | None, exact: float | None) -> str:
    """An estimate's error against the exact value, signed, in per cent.

    Parameters
    ----------
    estimate, exact : float or None
        The two values, in the same unit (Hz for a corner, s for a time).

    Returns
    -------
    str
        ``"+2.0 %"`` or ``"−13.9 %"`` (a minus sign, U+2212); empty when either value is
        missing or the exact value is zero.
    """
    if estimate is None or not exact:
        return ""
    return f"{100 * (estimate - exact) / exact:+.1f} %".replace("-", "−")
