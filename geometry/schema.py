"""Key tables for case files: each key's type, unit, default and meaning, checked once at the edge.

A section of a case file (``[ambient]``, one ``[[segment]]``, ``[instrument]``...) is described by a
tuple of :class:`Key`. :func:`read_table` checks a parsed TOML table against it and returns plain
SI values, so nothing downstream ever sees millimetres or the raw file. Every refusal is a
:class:`CaseError` that names the key and says how to fix it.
"""
from __future__ import annotations

import difflib
import math
from dataclasses import dataclass, field
from typing import Any, Callable

# Unit conversions at the edge: case-file unit -> factor to SI.
UNIT_TO_SI = {
    "": 1.0,
    "-": 1.0,
    "mm": 1e-3,
    "m": 1.0,
    "cm2": 1e-4,
    "m2": 1.0,
    "Pa": 1.0,
    "degC": 1.0,  # converted to kelvin where used: an offset, not a factor
    "N m": 1.0,
    "m/s": 1.0,
    "L/s": 1e-3,
}


class CaseError(ValueError):
    """A user mistake in a case file or on the command line: one clear message, no traceback.

    ``key`` is the dotted name of the offending key (``segment[2].length_mm``).
    """

    def __init__(self, key: str, message: str):
        self.key = key
        super().__init__(f"{key}: {message}" if key else message)


@dataclass(frozen=True)
class Key:
    """One key of a case-file table.

    kind: ``float``, ``int``, ``str``, ``bool``, ``list[float]``, ``list[pair]`` (list of 2-lists of floats).
    unit: the unit the user writes; values are returned multiplied by ``UNIT_TO_SI[unit]``.
    default: ``REQUIRED`` when the key must be given; ``None`` when optional with no value.
    positive: refuse zero and negative numbers. choices: allowed strings.
    """

    name: str
    kind: str
    unit: str = ""
    default: Any = None
    description: str = ""
    positive: bool = False
    non_negative: bool = False
    choices: tuple[str, ...] = ()
    check: Callable[[Any], str | None] | None = field(default=None, compare=False)

    @property
    def required(self) -> bool:
        return self.default is REQUIRED


class _Required:
    def __repr__(self) -> str:
        return "REQUIRED"


REQUIRED = _Required()


def _type_name(kind: str) -> str:
    return {"float": "a number", "int": "a whole number", "str": "a text string in quotes",
            "bool": "true or false", "list[float]": "a list of numbers such as [10, 20]",
            "list[pair]": "a list of [a, b] pairs such as [[1.0, 1.02], [5.0, 5.01]]"}[kind]


def _convert(key: Key, value: Any, where: str) -> Any:
    bad = CaseError(where, f"expected {_type_name(key.kind)}, got {value!r}")
    if key.kind in ("float", "int"):
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise bad
        if key.kind == "int" and not isinstance(value, int):
            raise bad
        if not math.isfinite(value):
            raise CaseError(where, f"must be a finite number, got {value!r}")
        if key.positive and value <= 0:
            raise CaseError(where, f"must be greater than zero, got {value!r}")
        if key.non_negative and value < 0:
            raise CaseError(where, f"must not be negative, got {value!r}")
        return value * UNIT_TO_SI[key.unit] if key.kind == "float" else value
    if key.kind == "str":
        if not isinstance(value, str):
            raise bad
        if key.choices and value not in key.choices:
            hint = difflib.get_close_matches(value, key.choices, n=1)
            extra = f" (did you mean {hint[0]!r}?)" if hint else ""
            raise CaseError(where, f"{value!r} is not one of {', '.join(key.choices)}{extra}")
        return value
    if key.kind == "bool":
        if not isinstance(value, bool):
            raise bad
        return value
    if key.kind == "list[float]":
        if not isinstance(value, list) or not value:
            raise bad
        items = [_convert(Key(key.name, "float", key.unit, positive=key.positive), v, where) for v in value]
        return tuple(items)
    if key.kind == "list[pair]":
        if not isinstance(value, list) or not value:
            raise bad
        pairs = []
        for item in value:
            if not isinstance(item, list) or len(item) != 2:
                raise bad
            pairs.append(tuple(_convert(Key(key.name, "float", key.unit, positive=key.positive), v, where)
                               for v in item))
        return tuple(pairs)
    raise AssertionError(f"unknown key kind {key.kind}")


def read_table(table: Any, keys: tuple[Key, ...], section: str) -> dict[str, Any]:
    """Check ``table`` against ``keys``; return ``{name: SI value}`` with defaults filled in.

    Unknown keys are refused with a did-you-mean; missing required keys, wrong types and
    out-of-range numbers are refused naming ``section.key``.
    """
    if not isinstance(table, dict):
        raise CaseError(section, "expected a table of keys")
    known = {k.name: k for k in keys}
    for name in table:
        if name not in known:
            hint = difflib.get_close_matches(name, list(known), n=1)
            extra = f"; did you mean {hint[0]!r}?" if hint else f"; known keys: {', '.join(known)}"
            raise CaseError(f"{section}.{name}", f"unknown key{extra}")
    values: dict[str, Any] = {}
    for key in keys:
        where = f"{section}.{key.name}"
        if key.name in table:
            value = _convert(key, table[key.name], where)
            if key.check is not None:
                problem = key.check(value)
                if problem:
                    raise CaseError(where, problem)
        elif key.required:
            unit = f" (in {key.unit})" if key.unit and key.unit != "-" else ""
            raise CaseError(where, f"missing; add {key.name} = ...{unit}: {key.description}")
        else:
            default = key.default
            if isinstance(default, (int, float)) and not isinstance(default, bool) and key.kind == "float":
                default = default * UNIT_TO_SI[key.unit]
            value = default
        values[key.name] = value
    return values


def key_reference(keys: tuple[Key, ...]) -> list[str]:
    """Markdown rows (key | type | unit | default | meaning) for the README key reference."""
    rows = []
    for key in keys:
        default = "required" if key.required else ("-" if key.default is None else repr(key.default))
        kind = key.kind + (f" ({' / '.join(key.choices)})" if key.choices else "")
        rows.append(f"| `{key.name}` | {kind} | {key.unit or '-'} | {default} | {key.description} |")
    return rows
