"""Read scenario TOML files, apply ``--set`` overrides, and report bad input in one line.

Every error raised here is a :class:`ScenarioError` whose text is ``"<file>: <key>: <reason>"``.
"""

from __future__ import annotations

import copy
import tomllib
from importlib import resources
from pathlib import Path

from pydantic import ValidationError

from atticsim.scenario.schema import Scenario

#: Name used in messages for the scenario embedded in the package.
DEMO_NAME = "<built-in demo house>"
_THERMOSTAT_KINDS = {"setpoints", "circuit"}
#: Keys that were renamed: old dotted key -> (new dotted key, what the new one takes).
RENAMED = {
    "thermostat.mode": ("thermostat.action", '"close-on-rise" (fan on when warm) or "close-on-fall" (fan on when cold)'),
    "roof.roughness": ("roof.surface_texture", "coarse, granular, textured, planed, fine or glassy"),
}


class ScenarioError(ValueError):
    """Bad scenario input; ``str(err)`` is one line naming the file, the key and the reason."""

    def __init__(self, file: str, key: str, reason: str):
        self.file, self.key, self.reason = str(file), key, reason
        where = f"{self.file}: {key}: " if key else f"{self.file}: "
        super().__init__(where + reason)


def _format_validation_error(err: ValidationError) -> tuple[str, str]:
    first = err.errors()[0]
    loc = [str(p) for p in first["loc"]]
    # Drop the discriminator tag pydantic inserts for tagged unions ("thermostat.setpoints.on").
    loc = [p for i, p in enumerate(loc) if not (i > 0 and loc[i - 1] == "thermostat" and p in _THERMOSTAT_KINDS)]
    key = ".".join(loc)
    kind, msg = first["type"], first["msg"]
    if kind == "extra_forbidden":
        reason = "unknown key"
    elif kind == "missing":
        reason = "required key is missing"
    elif kind in ("union_tag_invalid", "union_tag_not_found"):
        reason = "kind must be one of: " + ", ".join(sorted(_THERMOSTAT_KINDS))
    else:
        reason = msg.removeprefix("Value error, ")
        if "input" in first and kind not in ("value_error",) and not isinstance(first["input"], dict):
            reason += f" (got {first['input']!r})"
    if len(err.errors()) > 1:
        reason += f" [and {len(err.errors()) - 1} more problem(s)]"
    return key, reason


def parse_override(text: str) -> tuple[list[str], object]:
    """Split ``"dotted.key=value"`` into the key path and a value (TOML syntax if it parses, else text)."""
    if "=" not in text:
        raise ScenarioError("--set", text, "expected KEY=VALUE, e.g. fan.flow=\"1500 cfm\"")
    key, raw = text.split("=", 1)
    key = key.strip()
    if not key or any(not part for part in key.split(".")):
        raise ScenarioError("--set", text, "empty key")
    try:
        value = tomllib.loads(f"v = {raw.strip()}")["v"]
    except tomllib.TOMLDecodeError:
        value = raw.strip()
    return key.split("."), value


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
                    node = node[int(part)]
                except (ValueError, IndexError):
                    raise ScenarioError("--set", ".".join(path), f"no list item {part!r}") from None
            else:
                nxt = node.setdefault(part, {})
                if not isinstance(nxt, (dict, list)):
                    raise ScenarioError("--set", ".".join(path), f"{'.'.join(path[:i + 1])} is not a table")
                node = nxt
        last = path[-1]
        if isinstance(node, list):
            try:
                node[int(last)] = value
            except (ValueError, IndexError):
                raise ScenarioError("--set", ".".join(path), f"no list item {last!r}") from None
        else:
            node[last] = value
    return data


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
    try:
        scenario = Scenario.model_validate(data)
    except ValidationError as err:
        key, reason = _format_validation_error(err)
        raise ScenarioError(source, key, reason) from None
    wfile = scenario.weather.file
    if base_dir is not None and not wfile.startswith(("demo:", "pvlib:")) and not Path(wfile).is_absolute():
        weather = scenario.weather.model_copy(update={"file": str((base_dir / wfile).resolve())})
        scenario = scenario.model_copy(update={"weather": weather})
    from atticsim.scenario.plausibility import plausibility_warnings

    # kept on the scenario (not part of its content): the run's summary, the terminal and studies list them
    scenario._input_warnings = tuple(plausibility_warnings(scenario, data))
    return scenario


def read_toml(path: Path) -> dict:
    """Read a TOML file; a missing file or a syntax error becomes a one-line ScenarioError."""
    try:
        with open(path, "rb") as fh:
            return tomllib.load(fh)
    except FileNotFoundError:
        raise ScenarioError(path, "", "file not found") from None
    except tomllib.TOMLDecodeError as exc:
        raise ScenarioError(path, "", f"TOML syntax error: {exc}") from None
    except OSError as exc:
        raise ScenarioError(path, "", f"cannot read: {exc.strerror}") from None


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
