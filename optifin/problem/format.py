"""The problem-file format, declared once as a tree of field specifications.

The loader validates a parsed YAML document by walking :data:`PROBLEM` (collecting every
error, each with its YAML path) and :func:`optifin.problem.schema.problem_schema` turns the
same tree into a JSON Schema, so the two cannot drift apart. Each node can ``parse`` a value
(returning SI values, or :data:`INVALID` after recording an error) and describe itself as a
``schema``. Checks across fields that a JSON Schema cannot express (ranges against the
envelope, temperature limits against the ambient, ...) live in :mod:`optifin.problem.loader`.
"""

from __future__ import annotations

import difflib
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from typing import Any

from optifin.errors import UnitError
from optifin.library import COST_FIELDS, CURRENCIES, MATERIAL_FIELDS, PROCESS_FIELDS
from optifin.model.condition import (
    CHANNEL_HEAT_TRANSFER,
    COOLING_MODES,
    FIN_TIPS,
    LOSS_COEFFICIENTS,
    PIN_HEAT_TRANSFER,
    SPREADING_METHODS,
)
from optifin.model.design import FIN_TYPES, PIN_LAYOUTS
from optifin.problem.spec import LIMITS, LOWER_LIMITS, OBJECTIVES
from optifin.units import to_si

ALGORITHMS = ("auto", "nsga2", "nsga3", "exact")
#: Accepted spellings of an objective's sense -> the stored (British) spelling.
SENSES = {
    "minimise": "minimise",
    "minimize": "minimise",
    "maximise": "maximise",
    "maximize": "maximise",
}
NAME_PATTERN = r"[A-Za-z0-9_-]+"
KEY_PATTERN = r"[A-Za-z0-9_.-]+"
NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_UNSIGNED = r"\+?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_BARE = re.compile(rf"^\s*{NUMBER}\s*$")
_CURRENCY = re.compile(r"\b[A-Z]{3}\b")
_PER = re.compile(rf"^(\s*{NUMBER}\s*)/")
DEFAULT_CURRENCY = "USD"


class _Invalid:
    """Marker for a value that was present but wrong (its error is already recorded)."""

    def __repr__(self) -> str:
        return "INVALID"


INVALID = _Invalid()


class Measured(float):
    """An SI float that remembers how the file wrote it, for messages (``"60 W"``)."""

    text: str

    def __new__(cls, si: float, text: str):
        obj = super().__new__(cls, si)
        obj.text = text
        return obj


@dataclass
class Context:
    """Where a parse records its errors, and the library keys that choices may take.

    ``choices`` maps ``"material"``, ``"process"`` and ``"finish"`` to the valid keys, or to
    ``None`` when they are unknown (a broken library override): then any key passes.
    """

    choices: dict[str, tuple[str, ...] | None] = field(default_factory=dict)
    errors: list[str] = field(default_factory=list)

    def error(self, path: str, message: str) -> None:
        self.errors.append(f"{path or 'top level'}: {message}")


def join(path: str, key: Any) -> str:
    """The YAML path of ``key`` (a mapping key or a list index) under ``path``."""
    if isinstance(key, int):
        return f"{path}[{key}]"
    return f"{path}.{key}" if path else str(key)


def found(value: Any) -> str:
    """A short description of what the file holds, for "found ..." in messages."""
    if value is None:
        return "nothing"
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return repr(value if len(value) <= 60 else value[:57] + "...")
    if isinstance(value, int | float):
        text = repr(value)
        return text if len(text) <= 30 else text[:27] + "..."
    if isinstance(value, Mapping):
        return f"a mapping with {len(value)} key{'s' if len(value) != 1 else ''}"
    if isinstance(value, list | tuple):
        return f"a list of {len(value)}"
    text = repr(value)
    return f"{type(value).__name__} {text if len(text) <= 40 else text[:37] + '...'}"


def nearest(word: Any, options) -> str:
    """``"; did you mean 'x'?"`` for the closest option, or an empty string."""
    near = difflib.get_close_matches(str(word), list(options), n=1, cutoff=0.6)
    return f"; did you mean {near[0]!r}?" if near else ""


def text_of(value: Any) -> str:
    """How a parsed value was written (``"1.2 mm"``), for messages."""
    return getattr(value, "text", str(value))


@dataclass(frozen=True, kw_only=True)
class Node:
    """One field of the format: how to parse it and how to describe it in a JSON Schema."""

    description: str = ""

    def parse(self, value: Any, path: str, ctx: Context) -> Any:
        raise NotImplementedError

    def body(self, choices: Mapping[str, tuple[str, ...]]) -> dict:
        raise NotImplementedError

    def expected(self) -> str:
        return "a value"

    def schema(self, choices: Mapping[str, tuple[str, ...]]) -> dict:
        out = self.body(choices)
        if self.description:
            out = {"description": self.description, **out}
        return out


# -- scalars --------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class Quantity(Node):
    """A number with its unit as a string (``"1.5 mm"``), converted to SI.

    ``sign`` is ``"positive"``, ``"nonnegative"`` or ``"any"``; ``bare`` allows a plain
    number (dimensionless kinds); ``money`` accepts a currency code (the library's, USD).
    """

    kind: str
    example: str
    sign: str = "any"
    bare: bool = False
    upper: float | None = None
    money: bool = False

    def noun(self) -> str:
        if self.money:
            return "amount of money" if self.kind == "dimensionless" else "price"
        return "number" if self.kind == "dimensionless" else self.kind.replace("_", " ")

    def expected(self) -> str:
        article = "an" if self.noun()[0] in "aeiou" else "a"
        return f"{article} {self.noun()} such as {self.example}"

    def parse(self, value: Any, path: str, ctx: Context) -> Any:
        if isinstance(value, bool) or not isinstance(value, str | int | float):
            ctx.error(path, f"expected {self.expected()}, found {found(value)}")
            return INVALID
        bare = not isinstance(value, str) or _BARE.match(value)
        if bare and not self.bare:
            ctx.error(
                path,
                f"a bare number {found(value)} has no unit; write it with units, "
                f"e.g. {self.example}",
            )
            return INVALID
        spelled = value
        if self.money and isinstance(value, str):
            for code in _CURRENCY.findall(value):
                if code in CURRENCIES and code != DEFAULT_CURRENCY:
                    ctx.error(path, f"money must be in {DEFAULT_CURRENCY}, found {found(value)}")
                    return INVALID
            spelled = _PER.sub(r"\1 1/", value)  # "13 /kg" (the currency left out) is 13 USD/kg
        try:
            si = to_si(spelled, self.kind, path)
        except UnitError as exc:
            if self.kind == "dimensionless":  # units' message expects a unit name here
                ctx.error(path, f"expected {self.expected()}, found {found(value)}")
            else:
                ctx.errors.append(str(exc))
            return INVALID
        except Exception:  # pint and float() raise assorted errors on arbitrary input
            ctx.error(path, f"cannot read {found(value)} as {self.expected()}")
            return INVALID
        text = value.strip() if isinstance(value, str) else repr(value)
        if not math.isfinite(si):
            ctx.error(path, f"must be a finite number, found {text}")
            return INVALID
        if self.sign == "positive" and not si > 0:
            if self.kind == "temperature":
                ctx.error(path, f"must be above absolute zero, found {text}")
            else:
                ctx.error(path, f"must be positive, found {text}")
            return INVALID
        if self.sign == "nonnegative" and si < 0:
            ctx.error(path, f"must not be negative, found {text}")
            return INVALID
        if self.upper is not None and si > self.upper:
            ctx.error(path, f"must be at most {self.upper:g}, found {text}")
            return INVALID
        return Measured(si, text)

    def body(self, choices) -> dict:
        # "-40 degC" is a positive temperature: offset units keep their sign
        unsigned = self.sign == "positive" and self.kind != "temperature"
        number = _UNSIGNED if unsigned else NUMBER
        string: dict[str, Any] = {"type": "string"}
        if self.bare:
            string["pattern"] = rf"^\s*{number}.*$"
            plain: dict[str, Any] = {"type": "number"}
            if self.sign == "positive":
                plain["exclusiveMinimum"] = 0
            elif self.sign == "nonnegative":
                plain["minimum"] = 0
            if self.upper is not None:
                plain["maximum"] = self.upper
            out: dict[str, Any] = {"anyOf": [plain, string]}
        else:
            string["pattern"] = rf"^\s*{number}\s*\S.*$"
            out = string
        return {**out, "examples": [e.strip('"') for e in self.example.split(" or ")]}


@dataclass(frozen=True, kw_only=True)
class Integer(Node):
    """A whole number (an integral float such as ``20.0`` is taken as 20)."""

    minimum: int | None = None
    maximum: int | None = None

    def expected(self) -> str:
        if self.minimum is not None and self.maximum is not None:
            return f"an integer from {self.minimum} to {self.maximum}"
        if self.minimum is not None:
            return f"an integer >= {self.minimum}"
        return "an integer"

    def parse(self, value: Any, path: str, ctx: Context) -> Any:
        number = None
        if isinstance(value, int) and not isinstance(value, bool):
            number = value
        elif isinstance(value, float) and value.is_integer():
            number = int(value)
        if number is None:
            hint = (
                "; write it without quotes"
                if isinstance(value, str) and value.strip().isdigit()
                else ""
            )
            ctx.error(path, f"expected {self.expected()}, found {found(value)}{hint}")
            return INVALID
        if self.minimum is not None and number < self.minimum:
            ctx.error(path, f"must be at least {self.minimum}, found {number}")
            return INVALID
        if self.maximum is not None and number > self.maximum:
            ctx.error(path, f"must be at most {self.maximum}, found {found(value)}")
            return INVALID
        return number

    def body(self, choices) -> dict:
        out: dict[str, Any] = {"type": "integer"}
        if self.minimum is not None:
            out["minimum"] = self.minimum
        if self.maximum is not None:
            out["maximum"] = self.maximum
        return out


@dataclass(frozen=True, kw_only=True)
class Flag(Node):
    def expected(self) -> str:
        return "true or false"

    def parse(self, value: Any, path: str, ctx: Context) -> Any:
        if not isinstance(value, bool):
            ctx.error(path, f"expected true or false, found {found(value)}")
            return INVALID
        return value

    def body(self, choices) -> dict:
        return {"type": "boolean"}


@dataclass(frozen=True, kw_only=True)
class Text(Node):
    """Free text, or a name matching ``pattern`` (letters, digits, - and _)."""

    pattern: str | None = None

    def expected(self) -> str:
        return "a name of letters, digits, - and _" if self.pattern else "text"

    def parse(self, value: Any, path: str, ctx: Context) -> Any:
        if not isinstance(value, str):
            ctx.error(path, f"expected {self.expected()}, found {found(value)}")
            return INVALID
        if self.pattern and not re.fullmatch(self.pattern, value):
            ctx.error(path, f"expected {self.expected()}, found {found(value)}")
            return INVALID
        return value

    def body(self, choices) -> dict:
        out: dict[str, Any] = {"type": "string"}
        if self.pattern:
            out["pattern"] = f"^{self.pattern}$"
        return out


@dataclass(frozen=True, kw_only=True)
class Choice(Node):
    """One of fixed ``options``, or of the library keys named by ``source``."""

    options: tuple[str, ...] = ()
    source: str | None = None  #: "material", "process" or "finish"
    open_schema: bool = False  #: the schema takes any key (the file may define new ones)

    def keys(self, choices) -> tuple[str, ...] | None:
        return choices.get(self.source) if self.source else self.options

    def expected(self) -> str:
        if self.source:
            return f"a {self.source} key of the library"
        return "one of " + ", ".join(self.options)

    def parse(self, value: Any, path: str, ctx: Context) -> Any:
        keys = self.keys(ctx.choices)
        if not isinstance(value, str):
            ctx.error(path, f"expected {self.expected()}, found {found(value)}")
            return INVALID
        if keys is not None and value not in keys:
            if self.source:
                ctx.error(
                    path,
                    f"unknown {self.source} {value!r}{nearest(value, keys)} "
                    f"(known: {', '.join(keys)})",
                )
            else:
                ctx.error(
                    path, f"expected {self.expected()}, found {value!r}{nearest(value, keys)}"
                )
            return INVALID
        return value

    def body(self, choices) -> dict:
        keys = self.keys(choices)
        if self.open_schema:
            return {"type": "string", "pattern": f"^{KEY_PATTERN}$"}
        return {"type": "string", "enum": list(keys)} if keys is not None else {"type": "string"}


# -- containers -----------------------------------------------------------------------------
@dataclass(frozen=True)
class AtMostOne:
    """Rule: the keys exclude each other."""

    keys: tuple[str, ...]

    def check(self, value: Mapping, path: str, ctx: Context) -> None:
        given = [k for k in self.keys if k in value]
        if len(given) > 1:
            ctx.error(path, f"give {' or '.join(self.keys)}, not both")

    def schema(self) -> dict:
        return {"not": {"required": list(self.keys)}}


@dataclass(frozen=True)
class ExactlyOneWhen:
    """Rule: when ``key`` is ``equals``, exactly one of ``keys`` is given."""

    key: str
    equals: str
    keys: tuple[str, ...]

    def check(self, value: Mapping, path: str, ctx: Context) -> None:
        if value.get(self.key) != self.equals:
            return
        given = [k for k in self.keys if k in value]
        if len(given) != 1:
            if not given:
                what = "neither"
            else:  # name the keys given: "both" alone does not say which two of three
                count = "both" if len(given) == 2 else f"{len(given)}"
                what = f"{count} ({' and '.join(given)})"
            ctx.error(
                path,
                f"{self.key} {self.equals} needs exactly one of {' or '.join(self.keys)}, "
                f"found {what}",
            )

    def schema(self) -> dict:
        return {
            "if": {"properties": {self.key: {"const": self.equals}}, "required": [self.key]},
            "then": {"oneOf": [{"required": [k]} for k in self.keys]},
        }


@dataclass(frozen=True)
class AbsentWhen:
    """Rule: when ``key`` is ``equals``, none of ``keys`` may be given (``reason`` says why)."""

    key: str
    equals: str
    keys: tuple[str, ...]
    reason: str

    def check(self, value: Mapping, path: str, ctx: Context) -> None:
        if value.get(self.key) != self.equals:
            return
        for k in self.keys:
            if k in value:
                ctx.error(
                    join(path, k),
                    f"not used when {self.key} is {self.equals} ({self.reason}); remove it",
                )

    def schema(self) -> dict:
        return {
            "if": {"properties": {self.key: {"const": self.equals}}, "required": [self.key]},
            "then": {"not": {"anyOf": [{"required": [k]} for k in self.keys]}},
        }


@dataclass(frozen=True, kw_only=True)
class Section(Node):
    """A mapping with known keys; unknown keys are errors (with the nearest key)."""

    fields: Mapping[str, Node]
    required: tuple[str, ...] = ()
    rules: tuple = ()

    def expected(self) -> str:
        return "a mapping with keys " + ", ".join(self.fields)

    def parse(self, value: Any, path: str, ctx: Context, skip: tuple[str, ...] = ()) -> Any:
        if not isinstance(value, Mapping):
            ctx.error(path, f"expected {self.expected()}, found {found(value)}")
            return INVALID
        out: dict[str, Any] = {}
        for key, item in value.items():
            if not isinstance(key, str):
                ctx.error(
                    path, f"key {found(key)} is not text (expected one of {', '.join(self.fields)})"
                )
            elif key in skip:
                continue
            elif key not in self.fields:
                hint = nearest(key, self.fields) or f" (expected one of {', '.join(self.fields)})"
                ctx.error(join(path, key), f"unknown key{hint}")
            else:
                out[key] = self.fields[key].parse(item, join(path, key), ctx)
        for key in self.required:
            if key not in value:
                ctx.error(join(path, key), f"missing (expected {self.fields[key].expected()})")
        for rule in self.rules:
            rule.check(value, path, ctx)
        return out

    def body(self, choices) -> dict:
        out: dict[str, Any] = {
            "type": "object",
            "properties": {k: node.schema(choices) for k, node in self.fields.items()},
            "additionalProperties": False,
        }
        if self.required:
            out["required"] = list(self.required)
        if self.rules:
            out["allOf"] = [rule.schema() for rule in self.rules]
        return out


@dataclass(frozen=True, kw_only=True)
class Entries(Node):
    """A mapping from keys the user chooses (library keys, finish names) to ``item``."""

    item: Node
    noun: str = "key"

    def expected(self) -> str:
        return f"a mapping from {self.noun}s to {self.item.expected()}"

    def parse(self, value: Any, path: str, ctx: Context) -> Any:
        if not isinstance(value, Mapping):
            ctx.error(path, f"expected {self.expected()}, found {found(value)}")
            return INVALID
        out = {}
        for key, item in value.items():
            if not isinstance(key, str) or not re.fullmatch(KEY_PATTERN, key):
                ctx.error(
                    path, f"{found(key)} is not a valid {self.noun} (letters, digits, ., - and _)"
                )
                continue
            out[key] = self.item.parse(item, join(path, key), ctx)
        return out

    def body(self, choices) -> dict:
        return {
            "type": "object",
            "propertyNames": {"pattern": f"^{KEY_PATTERN}$"},
            "additionalProperties": self.item.schema(choices),
        }


@dataclass(frozen=True, kw_only=True)
class ListOf(Node):
    item: Node
    min_items: int = 0
    max_items: int | None = None
    noun: str = "item"

    def expected(self) -> str:
        count = (
            f"{self.min_items} to {self.max_items}"
            if self.max_items
            else (f"at least {self.min_items}")
        )
        return f"a list of {count} {self.noun}s"

    def parse(self, value: Any, path: str, ctx: Context) -> Any:
        if not isinstance(value, list | tuple):
            ctx.error(path, f"expected {self.expected()}, found {found(value)}")
            return INVALID
        if len(value) < self.min_items or (self.max_items and len(value) > self.max_items):
            ctx.error(path, f"expected {self.expected()}, found {len(value)}")
            return INVALID
        return [self.item.parse(v, join(path, i), ctx) for i, v in enumerate(value)]

    def body(self, choices) -> dict:
        out: dict[str, Any] = {"type": "array", "items": self.item.schema(choices)}
        if self.min_items:
            out["minItems"] = self.min_items
        if self.max_items:
            out["maxItems"] = self.max_items
        return out


@dataclass(frozen=True, kw_only=True)
class Pair(Node):
    """Two values, [across the fins, along the fins]."""

    item: Node

    def expected(self) -> str:
        return f"two values [across, along], each {self.item.expected()}"

    def parse(self, value: Any, path: str, ctx: Context) -> Any:
        if not isinstance(value, list | tuple) or len(value) != 2:
            ctx.error(path, f"expected {self.expected()}, found {found(value)}")
            return INVALID
        items = tuple(self.item.parse(v, join(path, i), ctx) for i, v in enumerate(value))
        return INVALID if INVALID in items else items

    def body(self, choices) -> dict:
        return {"type": "array", "items": self.item.schema(choices), "minItems": 2, "maxItems": 2}


@dataclass(frozen=True, kw_only=True)
class Raw(Node):
    """Any value, passed through for the parent node to check (not used in schemas)."""

    def expected(self) -> str:
        return self.description or "a value"

    def parse(self, value: Any, path: str, ctx: Context) -> Any:
        return value

    def body(self, choices) -> dict:
        return {}


# -- problem-specific nodes -----------------------------------------------------------------
@dataclass(frozen=True)
class Span:
    """A parsed numeric variable: ``low == high`` when fixed; ``step`` None when continuous."""

    low: Any
    high: Any
    step: Any = None

    @property
    def fixed(self) -> bool:
        return self.low == self.high


@dataclass(frozen=True, kw_only=True)
class Range(Node):
    """A numeric design variable: a fixed value, or ``{min, max}`` (``step`` if stepped)."""

    value: Node
    stepped: bool = True

    def _section(self) -> Section:
        fields = {
            "min": replace(self.value, description="Smallest value."),
            "max": replace(self.value, description="Largest value."),
        }
        if self.stepped:
            fields["step"] = replace(
                self.value, description="Step between values; without it the range is continuous."
            )
        return Section(fields=fields, required=("min", "max"))

    def expected(self) -> str:
        keys = "{min, max, step}" if self.stepped else "{min, max}"
        return f"{self.value.expected()}, or a range {keys}"

    def parse(self, value: Any, path: str, ctx: Context) -> Any:
        if not isinstance(value, Mapping):
            fixed = self.value.parse(value, path, ctx)
            return INVALID if fixed is INVALID else Span(fixed, fixed)
        parsed = self._section().parse(value, path, ctx)
        if parsed is INVALID or any(v is INVALID for v in parsed.values()):
            return INVALID
        if "min" not in parsed or "max" not in parsed:
            return INVALID
        low, high, step = parsed["min"], parsed["max"], parsed.get("step")
        if low > high:
            ctx.error(path, f"empty range, min {text_of(low)} > max {text_of(high)}")
            return INVALID
        if step is not None and high > low and step > high - low:
            ctx.error(
                join(path, "step"),
                f"{text_of(step)} is larger than the range {text_of(low)} to {text_of(high)}",
            )
            return INVALID
        return Span(low, high, step if high > low else None)

    def body(self, choices) -> dict:
        section = self._section().body(choices)
        return {"anyOf": [self.value.schema(choices), section]}


@dataclass(frozen=True, kw_only=True)
class Choices(Node):
    """A categorical design variable: a fixed key, a list of keys or ``{choices: [...]}``."""

    source: str | None = None  #: "material", "process" or "finish"
    options: tuple[str, ...] = ()  #: fixed options where there is no library source

    def _item(self) -> Choice:
        return Choice(source=self.source) if self.source else Choice(options=self.options)

    def expected(self) -> str:
        if not self.source:
            return f"one of {', '.join(self.options)}, a list of them or {{choices: [...]}}"
        return f"a {self.source} key, a list of them or {{choices: [...]}}"

    def parse(self, value: Any, path: str, ctx: Context) -> Any:
        item = self._item()
        if isinstance(value, str):
            v = item.parse(value, path, ctx)
            return INVALID if v is INVALID else (v,)
        if isinstance(value, Mapping):
            section = Section(
                fields={"choices": Raw(description="a list of keys")}, required=("choices",)
            )
            parsed = section.parse(value, path, ctx)
            if parsed is INVALID or "choices" not in parsed:
                return INVALID
            value, path = parsed["choices"], join(path, "choices")
        if not isinstance(value, list | tuple) or not value:
            ctx.error(path, f"expected {self.expected()}, found {found(value)}")
            return INVALID
        keys = [item.parse(v, join(path, i), ctx) for i, v in enumerate(value)]
        bad = INVALID in keys
        for i, key in enumerate(keys):
            if key is not INVALID and key in keys[:i]:
                ctx.error(join(path, i), f"{key!r} is listed twice")
                bad = True
        return INVALID if bad else tuple(keys)

    def body(self, choices) -> dict:
        one = self._item().schema(choices)
        many = {"type": "array", "items": one, "minItems": 1, "uniqueItems": True}
        return {
            "anyOf": [
                one,
                many,
                {
                    "type": "object",
                    "properties": {"choices": {"description": "The keys to choose among.", **many}},
                    "required": ["choices"],
                    "additionalProperties": False,
                },
            ]
        }


@dataclass(frozen=True, kw_only=True)
class Objectives(Node):
    """1 to 4 objectives, each a name (default sense) or ``{name: minimise|maximise}``."""

    max_items: int = 4

    def expected(self) -> str:
        return (
            f"a list of 1 to {self.max_items} objectives, each one of "
            f"{', '.join(OBJECTIVES)} or {{name: minimise|maximise}}"
        )

    def parse(self, value: Any, path: str, ctx: Context) -> Any:
        if not isinstance(value, list | tuple):
            ctx.error(path, f"expected {self.expected()}, found {found(value)}")
            return INVALID
        if not 1 <= len(value) <= self.max_items:
            ctx.error(path, f"expected 1 to {self.max_items} objectives, found {len(value)}")
            return INVALID
        out = []
        for i, item in enumerate(value):
            out.append(self._item(item, join(path, i), ctx))
        names = [o[0] for o in out if o is not INVALID]
        for i, o in enumerate(out):
            if o is not INVALID and o[0] in [p[0] for p in out[:i] if p is not INVALID]:
                ctx.error(join(path, i), f"{o[0]!r} is listed twice")
                return INVALID
        return INVALID if len(names) != len(out) else out

    def _item(self, item: Any, path: str, ctx: Context) -> Any:
        name_node = Choice(options=tuple(OBJECTIVES))
        if isinstance(item, str):
            name = name_node.parse(item, path, ctx)
            return INVALID if name is INVALID else (name, OBJECTIVES[name][1])
        if isinstance(item, Mapping) and len(item) == 1:
            ((name, sense),) = item.items()
            name = name_node.parse(name, path, ctx)
            if name is INVALID:
                return INVALID
            if not isinstance(sense, str) or sense not in SENSES:
                ctx.error(
                    join(path, name),
                    f"expected minimise or maximise, found {found(sense)}{nearest(sense, SENSES)}",
                )
                return INVALID
            return name, SENSES[sense]
        ctx.error(
            path, f"expected an objective name or {{name: minimise|maximise}}, found {found(item)}"
        )
        return INVALID

    def body(self, choices) -> dict:
        names = list(OBJECTIVES)
        return {
            "type": "array",
            "minItems": 1,
            "maxItems": self.max_items,
            "items": {
                "anyOf": [
                    {"type": "string", "enum": names},
                    {
                        "type": "object",
                        "minProperties": 1,
                        "maxProperties": 1,
                        "propertyNames": {"enum": names},
                        "additionalProperties": {"type": "string", "enum": list(SENSES)},
                    },
                ]
            },
        }


@dataclass(frozen=True, kw_only=True)
class HeatLoad(Node):
    """One source given directly, or a list under ``sources``.

    Parses to a list of ``(yaml_path, fields)`` pairs, one per source.
    """

    single: Section
    multi: Section

    def expected(self) -> str:
        return "a heat source (power, footprint, ...) or a list of them under sources"

    def parse(self, value: Any, path: str, ctx: Context) -> Any:
        if not isinstance(value, Mapping):
            ctx.error(path, f"expected {self.expected()}, found {found(value)}")
            return INVALID
        if "sources" not in value:
            parsed = self.single.parse(value, path, ctx)
            return [(path, parsed)]
        stray = [k for k in value if k != "sources" and k in self.single.fields]
        for key in stray:
            ctx.error(
                join(path, key),
                "give it under each entry of sources (or drop sources for a single heat source)",
            )
        rest = {k: v for k, v in value.items() if k not in stray}
        parsed = self.multi.parse(rest, path, ctx)
        if parsed is INVALID or parsed.get("sources", INVALID) is INVALID:
            return INVALID
        base = join(path, "sources")
        return [(join(base, i), s) for i, s in enumerate(parsed["sources"])]

    def body(self, choices) -> dict:
        return {"anyOf": [self.single.schema(choices), self.multi.schema(choices)]}


# -- the format ------------------------------------------------------------------------------
def _length(description: str = "", sign: str = "positive") -> Quantity:
    return Quantity(kind="length", example='"1.5 mm"', sign=sign, description=description)


def _temperature(description: str) -> Quantity:
    return Quantity(
        kind="temperature", example='"35 degC"', sign="positive", description=description
    )


SOURCE_FIELDS: dict[str, Node] = {
    "name": Text(pattern=NAME_PATTERN, description="Name in reports; default source1, ..."),
    "power": Quantity(
        kind="power",
        example='"60 W"',
        sign="positive",
        description="Heat the source dissipates into the base.",
    ),
    "footprint": Pair(
        item=_length(),
        description="Size of the source: [across the fins (width direction), along the "
        "fins (length direction)].",
    ),
    "position": Pair(
        item=_length(sign="nonnegative"),
        description="Centre of the source from the base corner, [across, along]; default centred.",
    ),
    "interface_resistance": Quantity(
        kind="thermal_resistance",
        example='"0.05 K/W"',
        sign="nonnegative",
        description="Thermal resistance of the interface material under the source.",
    ),
    "interface_resistance_per_area": Quantity(
        kind="area_thermal_resistance",
        example='"0.3 K*cm^2/W"',
        sign="nonnegative",
        description="Interface resistance per unit area, divided by the footprint area.",
    ),
}
_SOURCE_RULES = (AtMostOne(("interface_resistance", "interface_resistance_per_area")),)
SOURCE = Section(
    fields=SOURCE_FIELDS,
    required=("power", "footprint"),
    rules=_SOURCE_RULES,
    description="A rectangular heat source on the base.",
)

HEAT_LOAD = HeatLoad(
    single=SOURCE,
    multi=Section(
        fields={
            "sources": ListOf(
                item=SOURCE, min_items=1, noun="heat source", description="The heat sources."
            )
        },
        required=("sources",),
    ),
    description="The heat sources on the base: one given directly, or a list under sources.",
)

AMBIENT = Section(
    fields={
        "temperature": _temperature("Temperature of the air approaching the sink."),
        "altitude": Quantity(
            kind="altitude",
            example='"1500 m"',
            description="Altitude; the pressure follows the 1976 standard atmosphere.",
        ),
        "pressure": Quantity(
            kind="pressure",
            example='"85 kPa"',
            sign="positive",
            description="Absolute air pressure; default 101325 Pa.",
        ),
    },
    required=("temperature",),
    rules=(AtMostOne(("altitude", "pressure")),),
    description="The ambient air.",
)

_FLOWS = ("approach_velocity", "volumetric_flow", "fan")
FAN = Section(
    fields={
        "model": Text(
            pattern=KEY_PATTERN,
            description="Key of a fan in the fan data file (`optifin fans` lists them).",
        ),
        "curve": Section(
            fields={
                "flow": ListOf(
                    item=Quantity(kind="volumetric_flow", example='"10 CFM"', sign="nonnegative"),
                    min_items=2,
                    noun="flow",
                    description="Flows of the curve's points, increasing.",
                ),
                "pressure": ListOf(
                    item=Quantity(kind="pressure", example='"0.2 inH2O"', sign="nonnegative"),
                    min_items=2,
                    noun="pressure",
                    description="Static pressures at those flows, not increasing.",
                ),
            },
            required=("flow", "pressure"),
            description="The fan curve as a table of flow and static pressure.",
        ),
        "count": Integer(minimum=1, maximum=64, description="Identical fans; default 1."),
        "arrangement": Choice(
            options=("parallel", "series"),
            description="How several fans combine: side by side (flows add) or in series "
            "(pressures add); default parallel.",
        ),
    },
    rules=(AtMostOne(("model", "curve")),),
    description="A fan drives the air: the flow is where its curve meets the system curve.",
)
EXTRA_LOSS = Section(
    fields={
        "coefficient": Quantity(
            kind="dimensionless",
            example="1.5",
            sign="positive",
            bare=True,
            description="Loss coefficient K of ducts or grilles, on the velocity in `area`.",
        ),
        "area": Quantity(
            kind="area",
            example='"40 cm^2"',
            sign="positive",
            description="Flow area the coefficient refers to; default the sink frontal area.",
        ),
        "pressure_drop": Quantity(
            kind="pressure",
            example='"8 Pa"',
            sign="positive",
            description="A measured extra loss at the flow `at_flow`, scaled with flow squared.",
        ),
        "at_flow": Quantity(
            kind="volumetric_flow",
            example='"20 CFM"',
            sign="positive",
            description="Flow at which `pressure_drop` was measured.",
        ),
    },
    description="Extra system loss in series with the sink (with a fan).",
)
CLEARANCE = Section(
    fields={
        "side": _length("Gap beside each side of the sink to the duct wall.", "nonnegative"),
        "top": _length("Gap between the fin tips and the duct wall.", "nonnegative"),
        "open": Flag(description="No duct at all: the sink stands in an open stream."),
    },
    description="An unshrouded sink: air can pass around the fins (bypass). Default shrouded.",
)
COOLING = Section(
    fields={
        "mode": Choice(
            options=COOLING_MODES,
            description="forced (ducted fan flow) or natural (buoyancy, vertical fins).",
        ),
        "approach_velocity": Quantity(
            kind="velocity",
            example='"2 m/s" or "400 LFM"',
            sign="positive",
            description="Forced: mean air velocity over the fin frontal area ahead of the sink.",
        ),
        "volumetric_flow": Quantity(
            kind="volumetric_flow",
            example='"20 CFM"',
            sign="positive",
            description="Forced: air flow through the fin channels.",
        ),
        "fan": FAN,
        "extra_loss": EXTRA_LOSS,
        "clearance": CLEARANCE,
        "radiation": Flag(
            description="Include radiation; default on in natural, off in forced convection."
        ),
        "surroundings_temperature": _temperature(
            "Temperature of the surroundings that radiation sees; default the ambient."
        ),
    },
    required=("mode",),
    rules=(
        ExactlyOneWhen("mode", "forced", _FLOWS),
        AbsentWhen(
            "mode", "natural", (*_FLOWS, "extra_loss", "clearance"), "buoyancy drives the air"
        ),
    ),
    description="How the air moves.",
)

ENVELOPE = Section(
    fields={
        "max_width": _length("Largest width, across the fins."),
        "max_length": _length("Largest length, along the fins."),
        "max_height": _length("Largest height, base plus fins."),
    },
    description="Largest sink allowed; a variable range beyond it is cut to it.",
)

_LENGTH_VARIABLE = 'A length: fixed ("1.2 mm") or a range {min, max, step}; step optional.'
VARIABLES = Section(
    fields={
        "fin_count": Range(
            value=Integer(minimum=2, maximum=1000),
            stepped=False,
            description="Number of fins: fixed, or a range {min, max}.",
        ),
        "fin_thickness": Range(value=_length(), description=_LENGTH_VARIABLE),
        "fin_height": Range(value=_length(), description=_LENGTH_VARIABLE),
        "base_thickness": Range(value=_length(), description=_LENGTH_VARIABLE),
        "width": Range(
            value=_length(), description=_LENGTH_VARIABLE + " Default: the envelope's max_width."
        ),
        "length": Range(
            value=_length(), description=_LENGTH_VARIABLE + " Default: the envelope's max_length."
        ),
        "material": Choices(source="material", description="Material key(s) of the library."),
        "process": Choices(source="process", description="Process key(s) of the library."),
        "finish": Choices(source="finish", description="Surface finish(es); default bare."),
        "fin_type": Choices(
            options=FIN_TYPES, description="plate fins, pin fins, or both; default plate."
        ),
        "fin_taper": Range(
            value=Quantity(
                kind="dimensionless", example="0.7", sign="positive", bare=True, upper=1.0
            ),
            description="Plate fins: tip thickness over root thickness (1 untapered, the "
            "default); fixed or a range {min, max, step}.",
        ),
        "pin_diameter": Range(value=_length(), description="Pin fins: " + _LENGTH_VARIABLE),
        "pin_pitch_transverse": Range(
            value=_length(), description="Pin fins, pitch across the flow: " + _LENGTH_VARIABLE
        ),
        "pin_pitch_longitudinal": Range(
            value=_length(), description="Pin fins, pitch along the flow: " + _LENGTH_VARIABLE
        ),
        "pin_layout": Choices(
            options=PIN_LAYOUTS, description="Pin fins: inline, staggered or both; default inline."
        ),
    },
    required=("fin_height", "base_thickness", "material", "process"),
    description="Design variables: each fixed, a range, or choices. Plate fins need "
    "fin_count and fin_thickness; pin fins need pin_diameter and the two pitches.",
)

_LIMIT_EXAMPLES = {
    "temperature": '"95 degC"',
    "pressure": '"40 Pa"',
    "power": '"2 W"',
    "mass": '"0.5 kg"',
    "dimensionless": '"12 USD"',
    "volumetric_flow": '"15 CFM"',
}
CONSTRAINTS = Section(
    fields={
        key: Quantity(
            kind=kind,
            example=_LIMIT_EXAMPLES[kind],
            sign="positive",
            bare=kind == "dimensionless",
            money=kind == "dimensionless",
            description=f"Upper limit on the {model_key.replace('_', ' ')}.",
        )
        for key, (model_key, kind) in LIMITS.items()
    }
    | {
        key: Quantity(
            kind=kind,
            example=_LIMIT_EXAMPLES[kind],
            sign="positive",
            description=f"Lower limit on the {model_key.replace('_', ' ')}.",
        )
        for key, (model_key, kind) in LOWER_LIMITS.items()
    },
    description="Limits every design must meet.",
)

PRODUCTION = Section(
    fields={
        "quantity": Integer(
            minimum=1,
            maximum=10**9,
            description="Parts made; amortises set-up costs. Default 1000.",
        )
    },
    description="Production run.",
)

MODEL = Section(
    fields={
        "fin_tip": Choice(
            options=FIN_TIPS,
            description="Fin-tip condition; default adiabatic "
            "in forced, corrected in natural convection.",
        ),
        "channel_heat_transfer": Choice(
            options=CHANNEL_HEAT_TRANSFER, description="Channel heat-transfer correlation."
        ),
        "spreading": Choice(options=SPREADING_METHODS, description="Spreading resistance."),
        "loss_coefficients": Choice(
            options=LOSS_COEFFICIENTS, description="Entrance and exit loss coefficients."
        ),
        "pin_heat_transfer": Choice(
            options=PIN_HEAT_TRANSFER,
            description="Pin-array Nusselt correlation; default zukauskas_1972.",
        ),
    },
    description="Model options.",
)

SEARCH = Section(
    fields={
        "algorithm": Choice(options=ALGORITHMS, description="Search algorithm; default auto."),
        "population": Integer(
            minimum=4, maximum=10**6, description="Population size; default 100."
        ),
        "evaluations": Integer(
            minimum=4,
            maximum=10**10,
            description="Design evaluations; at least the population; default 20000.",
        ),
        "seed": Integer(minimum=0, maximum=2**32 - 1, description="Random seed; default 1."),
        "exact_limit": Integer(
            minimum=1,
            maximum=10**10,
            description="auto enumerates every "
            "design when the grid has at most this many; default 2000000.",
        ),
    },
    description="Search settings.",
)


CATALOG = Section(
    fields={
        "file": Text(
            description="Catalog CSV (relative to the problem file); default the "
            "bundled demo catalog (invented profiles)."
        ),
        "cut_lengths": Range(
            value=_length(),
            description="Cut lengths to rate: fixed, or {min, max, step}; default every 5 mm "
            "from 20 mm to the envelope.",
        ),
        "orientations": ListOf(
            item=Choice(options=("along", "across")),
            min_items=1,
            noun="orientation",
            description="along: profile width across the envelope width; across: turned "
            "90 degrees. Default both.",
        ),
        "in_search": Flag(
            description="Offer the catalog parts (profile x cut length) to the search beside "
            "free designs; default false (screening only)."
        ),
    },
    description="Stock profiles of a catalog, rated at cut lengths.",
)
INSERT = Section(
    fields={
        "material": Choice(source="material", description="Insert material."),
        "thickness": _length("Insert thickness, flush with the top of the base."),
        "footprint": Pair(item=_length(), description="Insert size [across, along] the fins."),
    },
    required=("material", "thickness", "footprint"),
    description="A spreader insert under the (one, centred) heat source.",
)
MATERIAL_OPTION = Section(
    fields={
        "name": Text(description="Label of the option in the study."),
        "material": Choice(source="material", description="Fin material (and base's)."),
        "base_material": Choice(
            source="material", description="Base material, where it differs (bonded fins)."
        ),
        "process": Choices(source="process", description="Process key(s) for this option."),
        "insert": INSERT,
    },
    required=("name", "material"),
    description="One construction to compare.",
)
STUDY = Section(
    fields={
        "materials": ListOf(
            item=MATERIAL_OPTION,
            min_items=2,
            noun="material option",
            description="Constructions compared: the problem is run once per option.",
        ),
        "price_sweep": Section(
            fields={
                "material": Choice(source="material", description="Material whose price moves."),
                "min": Quantity(
                    kind="price_per_mass",
                    example='"4 USD/kg"',
                    sign="positive",
                    money=True,
                    description="Lowest price per kg of the sweep.",
                ),
                "max": Quantity(
                    kind="price_per_mass",
                    example='"30 USD/kg"',
                    sign="positive",
                    money=True,
                    description="Highest price per kg of the sweep.",
                ),
                "steps": Integer(minimum=2, maximum=1000, description="Prices; default 41."),
            },
            required=("material", "min", "max"),
            description="Sweep one material's price per kg to find where the cheapest "
            "option changes.",
        ),
        "target_resistance": Quantity(
            kind="thermal_resistance",
            example='"0.35 K/W"',
            sign="positive",
            description="Thermal resistance the cheapest design of each option must reach "
            "in the price sweep; default that of the first option's knee design.",
        ),
    },
    required=("materials",),
    description="A material trade-off study (optifin study).",
)


def _override(kind: str, key: str) -> Quantity:
    examples = {
        "thermal_conductivity": '"180 W/m/K"',
        "density": '"2700 kg/m^3"',
        "specific_heat": '"900 J/kg/K"',
        "price_per_mass": '"13 USD/kg"',
        "price_per_volume": '"2 USD/cm^3"',
        "length": '"1.5 mm"',
        "area_thermal_resistance": '"0.2 K*cm^2/W"',
        "dimensionless": "0.9",
    }
    money = kind.startswith("price") or (kind == "dimensionless" and key in COST_FIELDS)
    return Quantity(
        kind=kind,
        example='"500 USD"' if money and kind == "dimensionless" else examples[kind],
        sign="positive",
        bare=kind == "dimensionless",
        money=money,
        upper=1.0 if key in ("material_yield", "emissivity") else None,
        description=f"{key.replace('_', ' ').capitalize()} (a library field, see the data files).",
    )


MATERIAL_OVERRIDE = Section(
    fields={
        **{f: _override(kind, f) for f, kind in MATERIAL_FIELDS.items()},
        "emissivity": Entries(
            item=_override("dimensionless", "emissivity"),
            noun="finish",
            description="Emissivity of each finish.",
        ),
        "name": Text(description="Display name."),
        "family": Text(description="Material family (aluminium, copper, ...)."),
    },
    description="Fields of one material; a new material needs every quantity and emissivity.",
)
PROCESS_OVERRIDE = Section(
    fields={
        **{f: _override(kind, f) for f, kind in PROCESS_FIELDS.items()},
        "cost": Section(
            fields={f: _override(kind, f) for f, kind in COST_FIELDS.items()},
            description="Cost terms of the process.",
        ),
        "name": Text(description="Display name."),
        "materials": ListOf(
            item=Choice(source="material", open_schema=True),
            min_items=1,
            noun="material",
            description="The materials the process can form.",
        ),
        "monolithic": Flag(description="Fins and base in one piece (false: joined fins)."),
        "fin_types": ListOf(
            item=Choice(options=FIN_TYPES),
            min_items=1,
            noun="fin type",
            description="What the process can form: plate, pin or both; default plate.",
        ),
        "stock": Choice(options=("net", "block"), description="Stock: net shape or a block."),
    },
    description="Fields of one process; a new process needs every limit and its materials.",
)
MATERIALS = Entries(
    item=MATERIAL_OVERRIDE,
    noun="material key",
    description="Changes to library materials, or new ones (every field).",
)
PROCESSES = Entries(
    item=PROCESS_OVERRIDE,
    noun="process key",
    description="Changes to library processes, or new ones.",
)

PROBLEM = Section(
    fields={
        "name": Text(pattern=NAME_PATTERN, description="Problem name; default the file stem."),
        "description": Text(description="Free text."),
        "heat_load": HEAT_LOAD,
        "ambient": AMBIENT,
        "cooling": COOLING,
        "envelope": ENVELOPE,
        "variables": VARIABLES,
        "objectives": Objectives(description="What to optimise, 1 to 4 objectives."),
        "constraints": CONSTRAINTS,
        "production": PRODUCTION,
        "model": MODEL,
        "search": SEARCH,
        "catalog": CATALOG,
        "study": STUDY,
        "materials": MATERIALS,
        "processes": PROCESSES,
    },
    required=("heat_load", "ambient", "cooling", "variables", "objectives"),
    description="An optifin heat-sink design problem.",
)
