"""Quantity fields of the scenario schema, and what a validation error at a key needs to be said in words:
the key's unit, the model that owns it, the keys it could have meant.

A quantity field is ``Annotated[float, quantity("length")]``: the value is converted to SI by
:func:`atticsim.units.to_si` before pydantic checks its bounds, and the converter carries its kind, so that a
message can give the bound in the key's own SI unit (and its IP equivalent).
"""

from __future__ import annotations

import difflib
import types
import typing

from pydantic import BaseModel, BeforeValidator, ConfigDict, model_validator

from atticsim.units import to_si

#: The SI unit of each quantity kind as written in messages (the unit of a bare number).
SI_LABELS = {
    "length": "m", "area": "m2", "volume": "m3", "flow": "m3/s", "power": "W", "energy": "J",
    "temperature": "degC", "temperature_difference": "K", "time": "s", "angle": "deg", "pressure": "Pa",
    "mass": "kg", "density": "kg/m3", "conductivity": "W/(m K)", "specific_heat": "J/(kg K)",
    "r_value": "m2K/W", "conductance": "W/K", "heat_capacity": "J/K", "velocity": "m/s", "voltage": "V",
    "resistance": "ohm", "current": "A", "capacitance": "F", "frequency": "Hz", "dimensionless": "",
    "percent": "%",
}

#: The configuration every scenario table shares: unknown keys refused, values frozen, and no float may be
#: infinite or NaN (TOML writes them as inf and nan).
STRICT = ConfigDict(extra="forbid", frozen=True, allow_inf_nan=False)


class StrictModel(BaseModel):
    """A scenario table: :data:`STRICT`, and true/false refused where a number is wanted (pydantic would read
    true as 1)."""

    model_config = STRICT

    @model_validator(mode="before")
    @classmethod
    def _no_true_false_numbers(cls, data):
        if isinstance(data, dict):
            for name, value in data.items():
                info = cls.model_fields.get(name) if isinstance(name, str) else None
                if isinstance(value, bool) and info is not None and _peel(info.annotation)[0] in (int, float):
                    raise ValueError(f"{name}: expected a number, got a true/false value")
        return data


def quantity(kind: str) -> BeforeValidator:
    """A validator that reads a number or a text with a unit as an SI float of ``kind`` (see units.KINDS)."""
    def convert(value):
        return to_si(value, kind)

    convert.kind = kind
    return BeforeValidator(convert)


def _peel(tp):
    """(type, metadata) with Annotated and Optional taken off ``tp``."""
    meta = []
    while True:
        origin = typing.get_origin(tp)
        if origin is typing.Annotated:
            args = typing.get_args(tp)
            tp, meta = args[0], meta + list(args[1:])
        elif origin in (typing.Union, types.UnionType):
            members = [a for a in typing.get_args(tp) if a is not type(None)]
            if len(members) != 1:
                return tp, meta
            tp = members[0]
        else:
            return tp, meta


def _member(tp, tag):
    """The member of a tagged union (the thermostat's kinds) whose ``kind`` is ``tag``, else None."""
    for member in typing.get_args(tp):
        base, _ = _peel(member)
        if isinstance(base, type) and issubclass(base, BaseModel) and "kind" in base.model_fields:
            if tag in typing.get_args(base.model_fields["kind"].annotation):
                return base
    return None


def locate(root: type[BaseModel], loc) -> tuple[type | None, str | None, list]:
    """Follow a pydantic error location through the schema.

    Returns
    -------
    (model, name, metadata)
        The model class that owns the last key of ``loc`` (None when the path leaves the schema), that key's
        name, and the metadata of its type (validators, constraints) where the key is a field.
    """
    tp, meta, owner, name = root, [], None, None
    for part in loc:
        base, extra = _peel(tp)
        if typing.get_origin(base) in (typing.Union, types.UnionType) and isinstance(part, str):
            chosen = _member(base, part)
            if chosen is not None:  # the tag pydantic inserts for a tagged union
                tp, meta = chosen, []
                continue
        if isinstance(base, type) and issubclass(base, BaseModel) and isinstance(part, str):
            owner, name = base, part
            info = base.model_fields.get(part)
            if info is None:
                return owner, name, []
            tp, meta = info.annotation, list(info.metadata)
        elif typing.get_origin(base) in (list, tuple) and isinstance(part, int):
            args = typing.get_args(base)
            if typing.get_origin(base) is tuple and args and args[-1] is not Ellipsis:
                tp = args[part] if part < len(args) else args[-1]
            else:
                tp = args[0] if args else typing.Any
            meta = []
        else:
            return None, None, []
    _, extra = _peel(tp)
    return owner, name, meta + extra


def model_at(root: type[BaseModel], loc) -> type[BaseModel] | None:
    """The model class at a location (``("attic",)`` -> Attic; a union's tag picks its member), or None."""
    tp = root
    for part in loc:
        base, _ = _peel(tp)
        if typing.get_origin(base) in (typing.Union, types.UnionType) and isinstance(part, str):
            chosen = _member(base, part)
            if chosen is not None:
                tp = chosen
                continue
        if isinstance(base, type) and issubclass(base, BaseModel) and isinstance(part, str):
            info = base.model_fields.get(part)
            if info is None:
                return None
            tp = info.annotation
        elif typing.get_origin(base) in (list, tuple) and isinstance(part, int):
            args = typing.get_args(base)
            tp = args[0] if args else typing.Any
        else:
            return None
    base, _ = _peel(tp)
    return base if isinstance(base, type) and issubclass(base, BaseModel) else None


def kind_of(metadata) -> str | None:
    """The quantity kind a field's metadata converts to, or None for a plain value."""
    for m in metadata:
        func = getattr(m, "func", None)
        if func is not None and hasattr(func, "kind"):
            return func.kind
    return None


def all_keys(model: type[BaseModel], prefix: str = "") -> list[str]:
    """Every dotted key of a model, tables included (list items as their table's name)."""
    out = []
    for name, info in model.model_fields.items():
        key = f"{prefix}{name}"
        out.append(key)
        base, _ = _peel(info.annotation)
        if typing.get_origin(base) is list:
            base, _ = _peel(typing.get_args(base)[0])
        members = typing.get_args(base) if typing.get_origin(base) in (typing.Union, types.UnionType) else (base,)
        for m in members:
            m, _ = _peel(m)
            if isinstance(m, type) and issubclass(m, BaseModel):
                out.extend(k for k in all_keys(m, key + ".") if k not in out)
    return out


def suggest(root: type[BaseModel], owner: type[BaseModel] | None, prefix: list[str], name: str) -> str | None:
    """The key a misspelt ``name`` (in the table at ``prefix``) most likely meant, as a dotted key: the
    closest field of its own table (difflib's ratio, at least 0.6), else a key of that name elsewhere."""
    if owner is not None:
        close = difflib.get_close_matches(name, list(owner.model_fields), n=1, cutoff=0.6)
        if close:
            return ".".join(prefix + [close[0]])
    leaves: dict[str, str] = {}
    for key in all_keys(root):
        leaves.setdefault(key.rsplit(".", 1)[-1], key)
    if name in leaves:
        return leaves[name]
    close = difflib.get_close_matches(name, list(leaves), n=1, cutoff=0.8)
    return leaves[close[0]] if close else None
