"""Checks a decision record against the published schema (``data/record-schema.json``).

The schema file is the one source of truth: this module interprets the part of JSON Schema
(draft 2020-12) that the file uses — ``type``, ``const``, ``enum``, ``properties``,
``required``, ``additionalProperties``, ``items``, ``minItems``/``maxItems``, ``minLength``,
``pattern``, ``minimum``/``maximum`` and their exclusive forms, ``anyOf`` and local ``$ref`` —
and reports every problem as ``field PATH: problem``. A keyword outside that part is refused when
the schema is read, so the schema cannot silently grow checks this module ignores. The tests
check that the reference implementation (``jsonschema``) agrees.
"""

from __future__ import annotations

import json
import re
from functools import cache
from typing import Any

from .._files import data_text

__all__ = ["record_schema", "schema_problems"]

SCHEMA_FILE = "record-schema.json"

_KNOWN = {
    "$schema",
    "$id",
    "$defs",
    "$ref",
    "title",
    "description",
    "type",
    "const",
    "enum",
    "properties",
    "required",
    "additionalProperties",
    "items",
    "minItems",
    "maxItems",
    "minLength",
    "pattern",
    "minimum",
    "maximum",
    "exclusiveMinimum",
    "exclusiveMaximum",
    "anyOf",
}
_TYPE_WORDS = {
    "object": "a table (JSON object)",
    "array": "a list",
    "string": "text",
    "number": "a number",
    "integer": "a whole number",
    "boolean": "true or false",
    "null": "null",
}


def _check_keywords(node: Any, where: str) -> None:
    if isinstance(node, dict):
        for key in node.keys() - _KNOWN:
            if where.endswith(("/properties", "/$defs")):
                continue
            raise RuntimeError(f"record schema uses {key!r} at {where}, which is not interpreted")
        for key, sub in node.items():
            if key in ("const", "enum"):
                continue
            _check_keywords(sub, f"{where}/{key}")
    elif isinstance(node, list):
        for i, sub in enumerate(node):
            _check_keywords(sub, f"{where}/{i}")


@cache
def record_schema() -> dict[str, Any]:
    """The published record schema as plain data (read once per process)."""
    schema: dict[str, Any] = json.loads(data_text(SCHEMA_FILE))
    _check_keywords(schema, "#")
    return schema


def _json_type(value: Any) -> str:
    if value is None:
        return "null"
    if isinstance(value, bool):
        return "boolean"
    if isinstance(value, int):
        return "integer"
    if isinstance(value, float):
        return "number"
    if isinstance(value, str):
        return "string"
    if isinstance(value, list):
        return "array"
    if isinstance(value, dict):
        return "object"
    return type(value).__name__


def _is_type(value: Any, name: str) -> bool:
    actual = _json_type(value)
    if name == "number":
        return actual in ("number", "integer")
    # Stricter than JSON Schema on purpose: 1.0 is not a whole number here, because a seed or a
    # trial count read as a float would not reproduce the call.
    return actual == name


def _equal(a: Any, b: Any) -> bool:
    """JSON equality: 1 equals 1.0, but true is not 1."""
    if isinstance(a, bool) or isinstance(b, bool):
        return type(a) is type(b) and a == b
    return bool(a == b)


def _show(value: Any) -> str:
    text = json.dumps(value, ensure_ascii=False)
    return text if len(text) <= 60 else text[:57] + "…"


class _Checker:
    def __init__(self, root: dict[str, Any]) -> None:
        self.root = root
        self.problems: list[str] = []

    def add(self, path: str, problem: str) -> None:
        self.problems.append(f"field {path or '(record)'}: {problem}")

    def resolve(self, ref: str) -> dict[str, Any]:
        node: Any = self.root
        for part in ref.removeprefix("#/").split("/"):
            node = node[part]
        return dict(node)

    def check(self, value: Any, schema: dict[str, Any], path: str) -> None:
        if "$ref" in schema:
            schema = {
                **self.resolve(schema["$ref"]),
                **{k: v for k, v in schema.items() if k != "$ref"},
            }
        if "anyOf" in schema:
            branches = []
            for option in schema["anyOf"]:
                sub = _Checker(self.root)
                sub.check(value, option, path)
                if not sub.problems:
                    break
                branches.append(sub.problems[0].split(": ", 1)[1])
            else:
                self.add(
                    path,
                    f"{_show(value)} matches none of the allowed forms ({'; '.join(branches)})",
                )
                return
        if "const" in schema and not _equal(value, schema["const"]):
            self.add(path, f"{_show(value)} must be {_show(schema['const'])}")
            return
        if "enum" in schema and not any(_equal(value, e) for e in schema["enum"]):
            allowed = ", ".join(_show(e) for e in schema["enum"])
            self.add(path, f"{_show(value)} is not one of {allowed}")
            return
        types = schema.get("type")
        if types is not None:
            names = [types] if isinstance(types, str) else list(types)
            if not any(_is_type(value, t) for t in names):
                want = " or ".join(_TYPE_WORDS[t] for t in names)
                self.add(path, f"must be {want}, not {_TYPE_WORDS.get(_json_type(value), 'this')}")
                return
        if isinstance(value, dict):
            self._object(value, schema, path)
        elif isinstance(value, list):
            self._array(value, schema, path)
        elif isinstance(value, str):
            if len(value) < schema.get("minLength", 0):
                self.add(path, "must not be empty")
            pattern = schema.get("pattern")
            if pattern is not None and not re.search(pattern, value):
                self.add(path, f"{_show(value)} is not of the expected form ({pattern})")
        elif _is_type(value, "number"):
            self._number(value, schema, path)

    def _object(self, value: dict[str, Any], schema: dict[str, Any], path: str) -> None:
        props = schema.get("properties", {})
        for key in schema.get("required", []):
            if key not in value:
                self.add(_join(path, key), "missing")
        extra = schema.get("additionalProperties", True)
        for key, item in value.items():
            where = _join(path, key)
            if key in props:
                self.check(item, props[key], where)
            elif extra is False:
                self.add(where, "unknown field (not in the record schema)")
            elif isinstance(extra, dict):
                self.check(item, extra, where)

    def _array(self, value: list[Any], schema: dict[str, Any], path: str) -> None:
        if len(value) < schema.get("minItems", 0):
            self.add(path, f"needs at least {schema['minItems']} item(s), has {len(value)}")
        if "maxItems" in schema and len(value) > schema["maxItems"]:
            self.add(path, f"takes at most {schema['maxItems']} item(s), has {len(value)}")
        items = schema.get("items")
        if isinstance(items, dict):
            for i, item in enumerate(value):
                self.check(item, items, f"{path}[{i}]")

    def _number(self, value: float, schema: dict[str, Any], path: str) -> None:
        if "minimum" in schema and value < schema["minimum"]:
            self.add(path, f"{value!r} is below the minimum {schema['minimum']}")
        if "maximum" in schema and value > schema["maximum"]:
            self.add(path, f"{value!r} is above the maximum {schema['maximum']}")
        if "exclusiveMinimum" in schema and value <= schema["exclusiveMinimum"]:
            self.add(path, f"{value!r} must be above {schema['exclusiveMinimum']}")
        if "exclusiveMaximum" in schema and value >= schema["exclusiveMaximum"]:
            self.add(path, f"{value!r} must be below {schema['exclusiveMaximum']}")


def _join(path: str, key: str) -> str:
    return f"{path}.{key}" if path else key


def schema_problems(doc: Any) -> list[str]:
    """Every way ``doc`` departs from the published record schema, as ``field PATH: problem``."""
    checker = _Checker(record_schema())
    checker.check(doc, record_schema(), "")
    return checker.problems
