"""Write a scenario file with some values changed (the parts a design chose), keeping the rest of the user's
file as it was: its comments, order and units. Through a TOML library (tomlkit, which keeps comments), never
by pasting text; the result is validated like any scenario before it is written.
"""

from __future__ import annotations

import os
import tomllib
from importlib import resources
from pathlib import Path

from atticsim.errors import OutputError, WriteFailure
from atticsim.scenario.load import ScenarioError, parse_override, scenario_from_dict


def ohms(value: float) -> str:
    """A resistance as the trade writes it, to 6 significant digits: "300 kohm", "11.3356 kohm", "1.2 Mohm"."""
    for factor, prefix in ((1e6, "M"), (1e3, "k")):
        if abs(value) >= factor:
            return f"{value / factor:.6g} {prefix}ohm"
    return f"{value:.6g} ohm"


def _set(doc, path: list[str], value, comment: str | None, where: str) -> None:
    """Set ``value`` at ``path`` in a tomlkit document (tables created as needed, list items by index)."""
    import tomlkit

    node = doc
    for part in path[:-1]:
        if isinstance(node, list):
            try:
                node = node[int(part)]
            except (ValueError, IndexError):
                raise ScenarioError(where, ".".join(path), f"no list item {part!r}") from None
        else:
            if part not in node:
                node[part] = tomlkit.table()
            node = node[part]
    item = tomlkit.item(value)
    if comment:
        item.comment(comment)
    last = path[-1]
    if isinstance(node, list):
        try:
            node[int(last)] = item
        except (ValueError, IndexError):
            raise ScenarioError(where, ".".join(path), f"no list item {last!r}") from None
    else:
        node[last] = item


def write_scenario(source: str | Path | None, overrides, changes: dict, out: str | Path, force: bool = False,
                   comment: str | None = None) -> Path:
    """Write ``source`` (a scenario file, or the built-in demo house when None) with ``--set`` overrides and
    ``changes`` applied to ``out``.

    Parameters
    ----------
    source : str, Path or None
        The scenario file the user gave.
    overrides : sequence of str
        ``dotted.key=value`` overrides given on the command line (applied, so the file says what was run).
    changes : dict
        dotted key -> value (text with a unit, or a number) to set.
    out : str or Path
        File to write.
    force : bool
        Overwrite an existing file.
    comment : str, optional
        A comment written beside each changed value.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    OutputError
        ``out`` exists and ``force`` is not given, or cannot be written (one line).
    ScenarioError
        The result does not validate (one line naming the key).
    """
    import tomlkit

    out = Path(out)
    if out.exists() and not force:
        raise OutputError(f"{out}: file exists; pass --force to overwrite it")
    if out.is_dir():
        raise OutputError(f"{out}: is a folder; give a file name to write the scenario to")
    if source is None:
        text = resources.files("atticsim.data").joinpath("demo_house.toml").read_text()
        base_dir = None
    else:
        source = Path(source)
        text = source.read_text()
        base_dir = source.resolve().parent
    doc = tomlkit.parse(text)
    for o in overrides:
        path, value = parse_override(o)
        _set(doc, path, value, None, "--set")
    for key, value in changes.items():
        _set(doc, key.split("."), value, comment, "--write")
    # a weather file named relative to the source file is named relative to the new file
    weather = doc.get("weather", {})
    wfile = weather.get("file") if hasattr(weather, "get") else None
    if base_dir is not None and isinstance(wfile, str) and not wfile.startswith(("demo:", "pvlib:")) \
            and not Path(wfile).is_absolute():
        target = (base_dir / wfile).resolve()
        try:
            moved = os.path.relpath(target, out.resolve().parent)
        except ValueError:  # another drive
            moved = str(target)
        if Path(moved).parts[:3] == ("..", "..", ".."):  # far away: the full path reads better
            moved = str(target)
        if moved != wfile:
            _set(doc, ["weather", "file"], Path(moved).as_posix(), None, "--write")
    result = tomlkit.dumps(doc)
    scenario_from_dict(tomllib.loads(result), str(out), out.resolve().parent)  # refuse a file that cannot run
    tmp = out.with_name(f".atticsim-tmp-{os.getpid()}-{out.name}")
    try:
        out.parent.mkdir(parents=True, exist_ok=True)
        tmp.write_text(result)
        if force:
            os.replace(tmp, out)
        else:
            try:
                os.link(tmp, out)  # fails if a file appeared there meanwhile: never overwritten without --force
            except FileExistsError:
                raise
            except OSError:  # a file system without hard links: create the file exclusively instead
                with open(out, "x", encoding="utf-8") as fh:
                    fh.write(result)
    except FileExistsError:
        raise OutputError(f"{out}: file exists; pass --force to overwrite it") from None
    except OSError as exc:
        raise WriteFailure(exc.errno, f"{out}: cannot write: {exc.strerror or exc}") from None
    finally:
        tmp.unlink(missing_ok=True)
    return out
