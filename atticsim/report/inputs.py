"""What the user asked, as they wrote it, and a fingerprint that traces a result to its inputs.

:func:`scenario_inputs` re-reads the scenario's TOML (and the ``--set`` overrides) so that a report shows
the user's own strings ("1200 cfm", "R-30") beside the SI values the model used. :func:`fingerprint`
hashes the validated scenario (its canonical JSON) and the weather's content.
"""

from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass, field
from pathlib import Path


@dataclass
class ScenarioInputs:
    """The scenario as the user wrote it: where it came from, its text, and every value given."""

    source: str
    text: str
    overrides: list = field(default_factory=list)
    #: (dotted key, as written, as used in SI with its unit)
    rows: list = field(default_factory=list)


def _leaves(data, prefix=""):
    """(dotted key, value) of every leaf of a TOML table; arrays of tables are numbered."""
    if isinstance(data, dict):
        for k, v in data.items():
            yield from _leaves(v, f"{prefix}{k}.")
    elif isinstance(data, list) and data and all(isinstance(x, dict) for x in data):
        for i, v in enumerate(data):
            yield from _leaves(v, f"{prefix}{i}.")
    else:
        yield prefix[:-1], data


def _field_kind(model_cls, path):
    """The quantity kind (atticsim.units.KINDS) of a dotted scenario key, or None (read from the field's
    unit validator)."""
    import typing

    cls = model_cls
    for i, part in enumerate(path):
        if part.isdigit():
            continue
        fields = getattr(cls, "model_fields", None)
        if not fields or part not in fields:
            return None
        f = fields[part]
        if i == len(path) - 1:
            for meta in f.metadata:
                func = getattr(meta, "func", None)
                for cell in (getattr(func, "__closure__", None) or ()):
                    if isinstance(cell.cell_contents, str):
                        return cell.cell_contents
            ann = f.annotation
            for arg in typing.get_args(ann):
                for meta in getattr(arg, "__metadata__", ()):
                    func = getattr(meta, "func", None)
                    for cell in (getattr(func, "__closure__", None) or ()):
                        if isinstance(cell.cell_contents, str):
                            return cell.cell_contents
            return None
        ann = f.annotation
        candidates = [ann, *typing.get_args(ann)]
        nxt = None
        for c in candidates:
            for inner in (c, *typing.get_args(c)):
                if hasattr(inner, "model_fields"):
                    nxt = inner
                    break
            if nxt:
                break
        if nxt is None:
            return None
        cls = nxt
    return None


def _used(dump, path):
    node = dump
    for part in path:
        if isinstance(node, list):
            node = node[int(part)] if part.isdigit() and int(part) < len(node) else None
        elif isinstance(node, dict):
            node = node.get(part)
        else:
            return None
    return node


def scenario_inputs(path, overrides=(), scenario=None) -> ScenarioInputs:
    """The scenario file's text and every value in it as written, beside the value used (SI).

    Parameters
    ----------
    path : str, Path or None
        The scenario file (None: the built-in demo house).
    overrides : sequence of str
        The ``--set`` overrides, applied as the loader applies them.
    scenario : Scenario, optional
        The validated scenario (for the SI values and their units).
    """
    import tomllib
    from importlib import resources

    from atticsim.scenario.load import DEMO_NAME, apply_overrides
    from atticsim.units import KINDS

    if path is None:
        text = resources.files("atticsim.data").joinpath("demo_house.toml").read_text()
        source = f"{DEMO_NAME} (fictional)"
    else:
        text = Path(path).read_text(encoding="utf-8-sig")  # as the loader reads it: a byte-order mark is not content
        source = str(path)
    data = apply_overrides(tomllib.loads(text), list(overrides))
    dump = scenario.model_dump(mode="json") if scenario is not None else {}
    cls = type(scenario) if scenario is not None else None
    rows = []
    for key, value in _leaves(data):
        parts = key.split(".")
        used = _used(dump, parts) if dump else None
        kind = _field_kind(cls, parts) if cls is not None else None
        si_unit = KINDS[kind][0].replace("**", "^") if kind and kind != "dimensionless" else ""
        if isinstance(used, float):
            from atticsim.report.page import fmt

            shown = f"{fmt(used, 4)} {si_unit}".strip()
        elif used is None:
            shown = ""
        else:
            shown = json.dumps(used) if isinstance(used, (list, dict)) else str(used)
        written = value if isinstance(value, str) else json.dumps(value, default=str)
        rows.append((key, written, shown))
    return ScenarioInputs(source, text, list(overrides), rows)


def _sha256_file(path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()


def scenario_digest(scenario) -> str:
    """sha256 of the validated scenario's canonical JSON (sorted keys, no spaces)."""
    text = json.dumps(scenario.model_dump(mode="json"), sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(text.encode()).hexdigest()


#: Rows of the weather columns hashed at a time (a year of minutes at once held a 25 MB copy).
DIGEST_ROWS = 65536


def weather_digest(scenario, timeseries=None, design=None) -> tuple[str, str]:
    """(what was hashed, sha256) of the weather: a file's bytes (check with ``sha256sum FILE``); for invented
    demo weather or a design day, the weather columns the run used (outdoor air, sky, wind, sun on each
    plane; or the design-day description)."""
    spec = scenario.weather.file
    if design is not None:
        text = json.dumps(design, sort_keys=True, default=str)
        return "design-day description", hashlib.sha256(text.encode()).hexdigest()
    if not spec.startswith("demo:"):
        try:
            from atticsim.forcing.weather import resolve_weather_path

            path = resolve_weather_path(spec)
            return f"file {Path(path).name}", _sha256_file(path)
        except (OSError, ValueError):
            pass
    if timeseries is not None:
        cols = [c for c in timeseries.columns if c in ("outdoor_air_c", "sky_c", "wind_speed_m_s")
                or (c.startswith("poa_") and c.endswith("_w_m2"))]
        h = hashlib.sha256()
        for a in range(0, len(timeseries), DIGEST_ROWS):  # the same bytes as the whole table's, a block at a time
            h.update(timeseries.iloc[a:a + DIGEST_ROWS][cols].to_numpy().tobytes())
        h.update(timeseries.index.asi8.tobytes())
        return f"the weather as used ({spec}, invented demo weather)", h.hexdigest()
    return spec, hashlib.sha256(spec.encode()).hexdigest()


def fingerprint(scenario, timeseries=None, period=None, design=None) -> dict:
    """The fingerprint of a run: atticsim's version, the scenario's and the weather's sha256, the period,
    and one short identifier over all of them."""
    from atticsim.version import __version__

    sc = scenario_digest(scenario)
    what, wx = weather_digest(scenario, timeseries, design)
    run_id = hashlib.sha256(json.dumps([__version__, sc, wx, period], default=str).encode()).hexdigest()[:16]
    return {"atticsim_version": __version__, "scenario_sha256": sc, "weather_hashed": what,
            "weather_sha256": wx, "period": period, "run_id": run_id}
