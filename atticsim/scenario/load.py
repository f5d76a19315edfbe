"""Read scenario TOML files, apply ``--set`` overrides, and report bad input in one line.

Every error raised here is a :class:`ScenarioError` whose text is ``"<file>: <key>: <reason>"``.
"""

from __future__ import annotations

import copy
import os
import tomllib
from importlib import resources
from pathlib import Path

from pydantic import ValidationError

from atticsim.errors import InputError, one_line, short_repr
from atticsim.scenario.schema import Scenario

#: Name used in messages for the scenario embedded in the package.
DEMO_NAME = "<built-in demo house>"
_THERMOSTAT_KINDS = {"setpoints", "circuit"}
#: Keys that were renamed: old dotted key -> (new dotted key, what the new one takes).
RENAMED = {
    "thermostat.mode": ("thermostat.action", '"close-on-rise" (fan on when warm) or "close-on-fall" (fan on when cold)'),
    "roof.roughness": ("roof.surface_texture", "coarse, granular, textured, planed, fine or glassy"),
}


class ScenarioError(InputError):
    """Bad scenario input; ``str(err)`` is one line naming the file, the key and the reason."""

    def __init__(self, file: str, key: str, reason: str):
        self.file, self.key, self.reason = str(file), key, one_line(reason)
        where = f"{self.file}: {key}: " if key else f"{self.file}: "
        super().__init__(where + self.reason)


#: Problems named in one message (the rest are counted).
_MAX_PROBLEMS = 4
_BOUNDS = {"greater_than": ("gt", "greater than"), "greater_than_equal": ("ge", "at least"),
           "less_than": ("lt", "less than"), "less_than_equal": ("le", "at most")}


#: pydantic's words for a wrong type, in the user's.
_PLAIN = {
    "int_parsing": "must be a whole number", "int_from_float": "must be a whole number",
    "int_parsing_size": "must be a whole number of ordinary size", "int_type": "must be a whole number",
    "float_parsing": "must be a number", "float_type": "must be a number", "string_type": "must be text",
    "bool_parsing": "must be true or false", "bool_type": "must be true or false",
    "model_type": "must be a table of keys", "model_attributes_type": "must be a table of keys",
    "dict_type": "must be a table of keys", "list_type": "must be a list [a, b, ...]",
    "tuple_type": "must be a list [a, b, ...]",
}


def _raw_at(data, loc):
    """The raw (TOML) value at a location, or None."""
    node = data
    for part in loc:
        if isinstance(node, dict) and part in node:
            node = node[part]
        elif isinstance(node, list) and isinstance(part, int) and 0 <= part < len(node):
            node = node[part]
        else:
            return None
    return node


def _bound_reason(e: dict, unit: str, kind: str | None) -> str:
    """'must be at most 30 m (98.43 ft) (got 1e+06 m)' for a pydantic bound error."""
    from atticsim.units import ip_text

    key, words = _BOUNDS[e["type"]]
    bound = e["ctx"][key]
    label = f" {unit}" if unit else ""
    ip = ip_text(bound, kind) if kind and bound != 0 else ""
    got = e.get("input")
    got_text = short_repr(got)
    if isinstance(got, (int, float)) and not isinstance(got, bool):
        try:
            got_text = f"{float(got):g}{label}"
        except OverflowError:  # an integer too large for a float
            pass
    return f"must be {words} {bound:g}{label}{f' ({ip})' if ip else ''} (got {got_text})"


def _problem(e: dict, data) -> tuple[list, str, str | None]:
    """(location without union tags, reason, suggested key) of one pydantic error."""
    from atticsim.scenario.fields import SI_LABELS, kind_of, locate, model_at, suggest
    from atticsim.scenario.plausibility import unit_hint

    raw_loc = list(e["loc"])
    owner, name, meta = locate(Scenario, raw_loc)
    # drop the discriminator tag pydantic inserts for tagged unions ("thermostat.setpoints.on")
    loc = [p for i, p in enumerate(raw_loc)
           if not (i > 0 and raw_loc[i - 1] == "thermostat" and p in _THERMOSTAT_KINDS)]
    kind, msg = e["type"], e["msg"]
    unit_kind = kind_of(meta)
    unit = SI_LABELS.get(unit_kind, "") if unit_kind else ""
    if not unit and owner is not None and name in owner.model_fields:
        described = (owner.model_fields[name].description or "").split(",")[0].split(";")[0].strip()
        unit = described if described and " " not in described and len(described) <= 8 else ""
    hint = None
    if kind == "extra_forbidden":
        hint = suggest(Scenario, owner, [str(p) for p in loc[:-1]], str(loc[-1]))
        here = ".".join(str(p) for p in loc)
        if hint == here and loc[0] == "thermostat":  # a key of the other kind of thermostat
            tk = _raw_at(data, ["thermostat", "kind"])
            hint, reason = None, f"not a key of a {tk} thermostat (thermostat.kind = {short_repr(tk)})"
        else:
            reason = "unknown key" + (f" (did you mean {hint}?)" if hint and hint != here else "")
    elif kind == "missing":
        reason = "required key is missing"
    elif kind in ("union_tag_invalid", "union_tag_not_found"):
        reason = "kind must be one of: " + ", ".join(sorted(_THERMOSTAT_KINDS))
    elif kind in _BOUNDS:
        reason = _bound_reason(e, unit, unit_kind)
    elif kind in ("too_short", "too_long"):
        n = e["ctx"].get("min_length" if kind == "too_short" else "max_length")
        reason = (f"must hold {'at least' if kind == 'too_short' else 'at most'} {n} item{'s' if n != 1 else ''} "
                  f"(got {e['ctx'].get('actual_length')})")
    elif kind == "string_too_long":
        reason = f"must be at most {e['ctx']['max_length']} characters (got {len(str(e.get('input', '')))})"
    elif kind == "finite_number":
        reason = f"must be a finite number (got {short_repr(e.get('input'))})"
    elif kind == "value_error":
        reason = msg.removeprefix("Value error, ")
        # a model's own check may name one of its keys first ("volume: ...", "ceiling.leakage_area: ...")
        head, sep, rest = reason.partition(": ")
        if sep and head and " " not in head:
            parts, here = head.split("."), [str(p) for p in loc]
            model = model_at(Scenario, raw_loc)
            if model is not None and parts[0] in model.model_fields:
                loc, reason = loc + parts, rest
            elif parts[:len(here)] == here and len(parts) > len(here):
                loc, reason = parts, rest
    else:
        reason = _PLAIN.get(kind, msg.replace("Input should be", "must be"))
        if "input" in e and not isinstance(e["input"], (dict, list)):
            reason += f" (got {short_repr(e['input'])})"
    if kind != "extra_forbidden":
        meant = unit_hint(".".join(str(p) for p in loc), _raw_at(data, loc))
        if meant:
            reason += f"; {meant}"
    return loc, reason, hint


def _format_validation_error(err: ValidationError, data=None) -> tuple[str, str]:
    """The key and the reason of a validation error, every problem named: unknown keys first (each with the
    key it most likely meant), then the others; a required key a misspelling stands for is said once."""
    problems = [_problem(e, data) for e in err.errors()]
    meant = {hint for _, _, hint in problems if hint}
    missing = {".".join(str(p) for p in loc) for loc, reason, _ in problems if reason == "required key is missing"}
    named = []
    for loc, reason, hint in problems:
        key = ".".join(str(p) for p in loc)
        if reason == "required key is missing" and key in meant:
            continue  # said with the misspelt key that stands for it
        if hint and hint in missing:
            reason = reason.replace("?)", ", which is required?)")
        named.append((0 if hint or reason.startswith("unknown key") else 1, key, reason))
    named.sort(key=lambda item: item[0])
    (_, key, reason), rest = named[0], named[1:]
    shown = [f"{k}: {r}" for _, k, r in rest[:_MAX_PROBLEMS - 1]]
    if shown:
        reason += "; also " + "; ".join(shown)
    if len(rest) > _MAX_PROBLEMS - 1:
        reason += f"; and {len(rest) - _MAX_PROBLEMS + 1} more"
    return key, reason


def toml_string(text: str) -> str:
    """``text`` as a TOML basic string that reads back as exactly ``text`` (quotes, backslashes and control
    characters escaped: a Windows path's ``\\t`` stays a backslash and a t). Raises ScenarioError for text
    TOML cannot hold (lone surrogates, from file names in no known encoding)."""
    out = []
    for ch in text:
        code = ord(ch)
        if 0xD800 <= code <= 0xDFFF:
            raise ScenarioError("--set", "", f"{short_repr(text)} holds characters TOML cannot represent")
        if ch in '"\\':
            out.append("\\" + ch)
        elif code < 0x20 or code == 0x7F:
            out.append(f"\\u{code:04x}")
        else:
            out.append(ch)
    return '"' + "".join(out) + '"'


def override_text(key: str, value) -> str:
    """A ``"dotted.key=value"`` override that sets ``key`` to ``value`` (text, number or true/false) exactly,
    whatever the value holds: what the commands write for --weather, --solver and the like."""
    if isinstance(value, bool):
        literal = "true" if value else "false"
    elif isinstance(value, (int, float)):
        literal = repr(float(value)) if isinstance(value, float) else str(value)
    else:
        literal = toml_string(str(value))
    return f"{key}={literal}"


def parse_override(text: str) -> tuple[list[str], object]:
    """Split ``"dotted.key=value"`` into the key path and a value (TOML syntax if it parses, else text)."""
    if "=" not in text:
        raise ScenarioError("--set", short_repr(text), "expected KEY=VALUE, e.g. fan.flow=\"1500 cfm\"")
    key, raw = text.split("=", 1)
    key = key.strip()
    if not key or any(not part.strip() for part in key.split(".")):
        raise ScenarioError("--set", short_repr(text), "empty key")
    try:
        value = tomllib.loads(f"v = {raw.strip()}")["v"]
    except (ValueError, RecursionError):  # not TOML (TOMLDecodeError, or an integer of over 4300 digits): text
        value = raw.strip()
    return [part.strip() for part in key.split(".")], value


def apply_overrides(data: dict, overrides: list[str] | tuple[str, ...]) -> dict:
    """Return a copy of the raw scenario dict with each ``dotted.key=value`` override applied.

    List items are addressed by index (``roof.planes.0.area=70``). A key that does not exist yet is
    created; the schema then rejects it if it is not a scenario key.
    """
    data = copy.deepcopy(data)
    for text in overrides:
        path, value = parse_override(text)
        node = data
        for i, part in enumerate(path[:-1]):
            if isinstance(node, list):
                try:
                    node = node[_index(part)]
                except (ValueError, IndexError):
                    raise ScenarioError("--set", ".".join(path), f"no list item {part!r} "
                                        f"(items are numbered from 0 to {len(node) - 1})") from None
            else:
                nxt = node.setdefault(part, {})
                if not isinstance(nxt, (dict, list)):
                    raise ScenarioError("--set", ".".join(path), f"{'.'.join(path[:i + 1])} is not a table")
                node = nxt
        last = path[-1]
        if isinstance(node, list):
            try:
                node[_index(last)] = value
            except (ValueError, IndexError):
                raise ScenarioError("--set", ".".join(path), f"no list item {last!r} "
                                    f"(items are numbered from 0 to {len(node) - 1})") from None
        else:
            node[last] = value
    return data


def _index(part: str) -> int:
    """A list index of a dotted key (0, 1, ...): no sign, no blanks."""
    if not part.isdigit() or len(part) > 6:
        raise ValueError(part)
    return int(part)


def _check_renamed(data: dict, source: str) -> None:
    """A one-line error naming the new key for a key that was renamed."""
    for old, (new, takes) in RENAMED.items():
        node = data
        for part in old.split("."):
            node = node.get(part) if isinstance(node, dict) else None
        if node is not None:
            raise ScenarioError(source, old, f"renamed: use {new} ({takes})")


def scenario_from_dict(data: dict, source: str, base_dir: Path | None = None) -> Scenario:
    """Validate a raw scenario dict; resolve a relative weather path against ``base_dir``."""
    _check_renamed(data, source)
    if not isinstance(data, dict):
        raise ScenarioError(source, "", "a scenario is a TOML table of tables ([house], [site], ...)")
    try:
        scenario = Scenario.model_validate(data)
    except ValidationError as err:
        key, reason = _format_validation_error(err, data)
        raise ScenarioError(source, key, reason) from None
    except RecursionError:
        raise ScenarioError(source, "", "values nested too deeply") from None
    wfile = scenario.weather.file
    if base_dir is not None and not wfile.startswith(("demo:", "pvlib:")) and not Path(wfile).is_absolute():
        weather = scenario.weather.model_copy(update={"file": str((base_dir / wfile).resolve())})
        scenario = scenario.model_copy(update={"weather": weather})
    from atticsim.scenario.plausibility import plausibility_warnings

    # kept on the scenario (not part of its content): the run's summary, the terminal and studies list them
    scenario._input_warnings = tuple(plausibility_warnings(scenario, data))
    return scenario


#: Largest scenario or study file read [bytes] (a scenario is a few kB; anything far larger is not one).
MAX_TOML_BYTES = 2_000_000


def read_toml(path: Path, error=ScenarioError) -> dict:
    """Read a TOML file (UTF-8, a byte-order mark allowed); a missing, unreadable, binary or malformed file
    becomes a one-line ``error(path, "", reason)``."""
    import stat

    try:
        mode = os.stat(path).st_mode
        if not (stat.S_ISREG(mode) or stat.S_ISDIR(mode)):  # a device or a pipe would block or never end
            raise error(path, "", "not a regular file (a device or a pipe); give a TOML file")
        with open(path, "rb") as fh:
            raw = fh.read(MAX_TOML_BYTES + 1)
    except FileNotFoundError:
        raise error(path, "", "file not found") from None
    except IsADirectoryError:
        raise error(path, "", "is a folder, not a TOML file") from None
    except OSError as exc:
        raise error(path, "", f"cannot read: {exc.strerror or exc}") from None
    if len(raw) > MAX_TOML_BYTES:
        raise error(path, "", f"larger than {MAX_TOML_BYTES:,} bytes: not a scenario file")
    try:
        text = raw.decode("utf-8-sig")  # an editor's byte-order mark is not content
    except UnicodeDecodeError as exc:
        raise error(path, "", f"not a UTF-8 text file (byte {exc.start} is 0x{raw[exc.start]:02x}); "
                              f"expected a TOML text file") from None
    if "\x00" in text:
        raise error(path, "", "not a text file (it holds NUL bytes); expected a TOML text file")
    try:
        return tomllib.loads(text)
    except ValueError as exc:  # TOMLDecodeError, or an integer too long to read
        raise error(path, "", f"TOML syntax error: {exc}") from None
    except RecursionError:
        raise error(path, "", "TOML syntax error: arrays or tables nested too deeply") from None


def load_scenario(path: str | Path | None = None, overrides=()) -> Scenario:
    """Load a scenario file (or the built-in demo house when ``path`` is None) and apply overrides.

    Parameters
    ----------
    path : str or Path, optional
        TOML scenario file. None loads the demo house shipped inside the package.
    overrides : sequence of str
        ``"dotted.key=value"`` strings, applied before validation.

    Returns
    -------
    Scenario
        The validated scenario, all quantities in SI; ``scenario.input_warnings`` lists what validates but
        looks wrong (:func:`atticsim.scenario.plausibility.plausibility_warnings`).
    """
    if path is None:
        text = resources.files("atticsim.data").joinpath("demo_house.toml").read_text()
        data, source, base = tomllib.loads(text), DEMO_NAME, None
    else:
        path = Path(path)
        data, source, base = read_toml(path), str(path), path.parent
    if overrides:
        data = apply_overrides(data, overrides)
        source = f"{source} (with --set)"
    return scenario_from_dict(data, source, base)


def demo_scenario(overrides=()) -> Scenario:
    """The demo house embedded in the package (a fictional house on a fictional site)."""
    return load_scenario(None, overrides)
