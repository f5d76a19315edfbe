"""Fuzzing the edges: whatever a scenario, a --set text or a weather file holds, either it is accepted or the
project's own error type comes out with one line naming the file (never a raw library exception).

Bounded so that the suite stays quick (hypothesis's max_examples below; no deadline: the first example of a
kind pays for imports). The strategies mix the keys and units atticsim knows with junk: unknown keys,
non-finite and huge numbers, nested lists and tables, unit texts with brackets and exponents, random bytes.
"""

import datetime
import random
import tomllib
from importlib import resources
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from atticsim.errors import InputError
from atticsim.io import WeatherError, read_weather, write_weather_csv
from atticsim.scenario import ScenarioError, load_scenario
from atticsim.scenario.fields import all_keys
from atticsim.scenario.load import override_text, parse_override, scenario_from_dict, toml_string
from atticsim.scenario.schema import Scenario
from atticsim.units import KINDS, UnitError, to_si

DEMO = tomllib.loads(resources.files("atticsim.data").joinpath("demo_house.toml").read_text())
# the fictional bungalow with a home-built circuit thermostat (invented part values)
CIRCUIT = tomllib.loads((Path(__file__).resolve().parents[2] / "scenarios" / "heron_lane_circuit.toml").read_text())
KEYS = all_keys(Scenario)
FUZZ = settings(max_examples=150, deadline=None, database=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])

UNITS = ["m", "ft", "m2", "ft2", "m3", "cfm", "m3/s", "W", "hp", "kW", "degC", "degF", "K", "s", "min", "h",
         "deg", "Pa", "in_wc", "kg", "ohm", "kohm", "V", "mA", "uF", "Hz", "%", "R-", "RSI", "(m", "m)", "m/0",
         "m**2**2", "m*10**10**10", "1/0", "((((m))))", "m^2", "", "km", "us", "µm", "degC*degC"]
numbers = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True),
    st.integers(min_value=-(10**500), max_value=10**500),
    st.sampled_from([0, -0.0, 1e-300, 1e308, 1e400, float("inf"), float("nan"), 2**64]),
)
unit_texts = st.builds(lambda n, u, sep: f"{n}{sep}{u}", st.one_of(st.floats(), st.integers(-10**30, 10**30)),
                       st.sampled_from(UNITS), st.sampled_from(["", " ", "  "]))
scalars = st.one_of(numbers, unit_texts, st.text(max_size=40), st.booleans(),
                    st.dates(min_value=datetime.date(1, 1, 1)), st.sampled_from(["R-38", "6/12", "RSI 6.7", "inf m"]))
values = st.recursive(scalars, lambda inner: st.one_of(st.lists(inner, max_size=4),
                                                       st.dictionaries(st.text(max_size=8), inner, max_size=3)),
                      max_leaves=8)


def _assert_one_line_error(exc: Exception, source: str) -> None:
    text = str(exc)
    assert "\n" not in text and text.startswith(source), text


def _set(data: dict, dotted: str, value) -> dict:
    node = data
    parts = dotted.split(".")
    for part in parts[:-1]:
        nxt = node.get(part) if isinstance(node, dict) else None
        if not isinstance(nxt, dict):
            nxt = {}
            node[part] = nxt
        node = nxt
    node[parts[-1]] = value
    return data


@FUZZ
@given(changes=st.lists(st.tuples(st.one_of(st.sampled_from(KEYS), st.text(min_size=1, max_size=12)), values),
                        min_size=1, max_size=4), circuit=st.booleans())
def test_load_scenario_lets_only_scenario_errors_out(changes, circuit):
    import copy

    data = copy.deepcopy(CIRCUIT if circuit else DEMO)
    for key, value in changes:
        _set(data, key, value)
    try:
        scenario_from_dict(data, "fuzz.toml")
    except ScenarioError as exc:
        _assert_one_line_error(exc, "fuzz.toml: ")


@FUZZ
@given(text=st.one_of(st.text(max_size=80),
                      st.builds(lambda k, v: f"{k}={v}", st.sampled_from(KEYS), st.text(max_size=40)),
                      st.builds(lambda k, v: f"{k}={v}", st.sampled_from(KEYS), unit_texts),
                      st.builds(lambda k, n: f"{k}={'[' * n}1{']' * n}", st.sampled_from(KEYS),
                                st.integers(0, 3000))))
def test_set_overrides_let_only_scenario_errors_out(text):
    try:
        load_scenario(None, [text])
    except ScenarioError as exc:
        assert "\n" not in str(exc)
        assert str(exc).startswith(("--set: ", "<built-in demo house> (with --set): ")), str(exc)


@FUZZ
@given(value=st.one_of(numbers, unit_texts, st.text(max_size=120), st.booleans(), st.lists(numbers, max_size=2)),
       kind=st.sampled_from(sorted(KINDS)))
def test_to_si_gives_a_finite_float_or_a_unit_error(value, kind):
    import math

    try:
        x = to_si(value, kind)
    except UnitError as exc:
        assert "\n" not in str(exc)
    else:
        assert isinstance(x, float) and math.isfinite(x)


@settings(max_examples=300, deadline=None, database=None)
@given(text=st.text(alphabet=st.characters(exclude_categories=("Cs",)), max_size=60))
def test_override_text_sets_any_text_exactly(text):
    # the --weather path and the like reach the scenario as they were typed: quotes, backslashes, tabs
    assert tomllib.loads(f"v = {toml_string(text)}")["v"] == text
    assert parse_override(override_text("weather.file", text)) == (["weather", "file"], text)


# --- weather readers ------------------------------------------------------------------------------------

def _demo_csv(folder: Path) -> bytes:
    from atticsim.forcing.weather import load_weather

    frame, meta = load_weather("demo:saltmarsh-point")  # invented weather
    path = folder / "demo.csv"
    write_weather_csv(frame.loc["2025-07-01":"2025-07-03"], meta, path)
    return path.read_bytes()


def _epw_bytes() -> bytes:
    # an invented two-day EPW (the field order of tests/io/test_io_typical_year.py's writer)
    lines = ["LOCATION,Invented Mesa,AZ,USA,invented for atticsim tests,999999,33.450,-112.070,-7.0,340.0",
             "DESIGN CONDITIONS,0", "TYPICAL/EXTREME PERIODS,0", "GROUND TEMPERATURES,0",
             "HOLIDAYS/DAYLIGHT SAVINGS,No,0,0,0", "COMMENTS 1,Invented weather; not a real climate", "COMMENTS 2,",
             "DATA PERIODS,1,1,Data,Tuesday, 7/ 1, 7/ 2"]
    for day in (1, 2):
        for hour in range(1, 25):
            ghi = 500 if 8 <= hour <= 17 else 0
            lines.append(f"2025,7,{day},{hour},60,?9?9?9?9E0?9?9?9?9?9?9?9?9?9?9?9?9?9?9?9*9*9?9?9?9,"
                         f"{25 + hour % 7},12.0,40,97000,9999,9999,{380 + hour},{ghi},{ghi // 2},{ghi // 4},"
                         f"999999,999999,999999,9999,200,3.5,{hour % 11},{hour % 5},9999,77777,9,999999999,20,0.1,"
                         f"0,88,0.2,0,1")
    return ("\n".join(lines) + "\n").encode("latin-1")


def _pvlib_bytes(name: str) -> bytes:
    from atticsim.forcing.weather import pvlib_data_file

    return pvlib_data_file(name).read_bytes()


def _mutate(data: bytes, kind: int, where: float, junk: bytes) -> bytes:
    """A damaged copy: cut at a place, a byte flipped, junk inserted, or a line replaced by junk."""
    i = int(where * len(data))
    if kind == 0:
        return data[:i]
    if kind == 1:
        return data[:i] + bytes([data[i] ^ 0x5A if i < len(data) else 0]) + data[i + 1:]
    if kind == 2:
        return data[:i] + junk + data[i:]
    lines = data.split(b"\n")
    k = min(int(where * len(lines)), len(lines) - 1)
    lines[k] = junk
    return b"\n".join(lines)


mutations = dict(kind=st.integers(0, 3), where=st.floats(0.0, 1.0), junk=st.binary(max_size=40) | st.sampled_from(
    [b"", b",,,,", b"nan,inf,-inf", b"\xef\xbb\xbf", b"\x00\x00", b"9999," * 40, b"1e999", b"-", b"\"unclosed"]))


def _read_or_refuse(path: Path) -> None:
    try:
        read_weather(path)
    except WeatherError as exc:
        assert "\n" not in str(exc) and str(exc).startswith(str(path)), str(exc)


@pytest.mark.parametrize("fmt,examples", [("csv", 60), ("epw", 60), ("tmy3", 25), ("tmy2", 12)])
def test_weather_readers_let_only_weather_errors_out(tmp_path, fmt, examples):
    original = {"csv": lambda: _demo_csv(tmp_path), "epw": _epw_bytes,
                "tmy3": lambda: _pvlib_bytes("723170TYA.CSV"), "tmy2": lambda: _pvlib_bytes("12839.tm2")}[fmt]()
    path = tmp_path / f"fuzzed.{fmt}"

    @settings(max_examples=examples, deadline=None, database=None,
              suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
    @given(**mutations)
    def check(kind, where, junk):
        path.write_bytes(_mutate(original, kind, where, junk))
        _read_or_refuse(path)

    check()


def test_random_bytes_are_refused_as_weather(tmp_path):
    rng = random.Random(7)
    for n in (0, 1, 100, 5000):
        path = tmp_path / f"noise{n}.csv"
        path.write_bytes(bytes(rng.randrange(256) for _ in range(n)))
        with pytest.raises(InputError):
            read_weather(path)
