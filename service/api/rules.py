"""Rules over several fields of a request, each declared once: its JSON Schema and its check.

A request schema lists its rules in ``RULES``; a field may carry rules of its own (``rules=``
on a Number or Quantity, or a ``rules(name)`` method). :class:`RuleSchema` checks every rule
after the fields have loaded (a 422 with a pointer per message) and ``api.base.Converter``
publishes the same rules as the schema's ``allOf``, fields' rules first in field order, so
that data valid by the spec is data the endpoint accepts. A rule whose fields are not all in
the schema does not apply.

Checks see the loaded data: a key is present when the request gave the field (or it has a
default), and a Quantity is a ``fields.Value`` (``.unit`` is the unit given).

>>> rule = NotTogether("load_factor", "bank_angle")
>>> rule.spec()
{'not': {'required': ['load_factor', 'bank_angle']}}
>>> rule.check({"load_factor": 1.2, "bank_angle": 30})["bank_angle"]
'Give either load_factor or bank_angle, not both.'
"""

from __future__ import annotations

from collections.abc import Callable

Message = str | Callable[..., str] | dict


def _say(message: Message, *args) -> str:
    """A message: the text, or the text for ``args`` (a callable or a dict keyed by the first)."""
    if isinstance(message, dict):
        return message[args[0]]
    return message(*args) if callable(message) else message


def all_required(names) -> dict:
    return {"required": list(names)}


# --- conditions: what a request gives --------------------------------------------------------------

class Given:
    """A condition on a request: every one of ``names`` given, with ``value``: {field: value} among them;
    ``inside``: {block: condition} holding in that nested block; ``any_of``: at least one of these given;
    ``all_of``: every one of these conditions."""

    def __init__(self, *names: str, value: dict | None = None, inside: dict | None = None,
                 any_of: tuple[str, ...] = (), all_of: tuple[Given, ...] = ()):
        self.names, self.value, self.inside, self.any_of, self.all_of = names, value or {}, inside or {}, any_of, all_of
        #: Fields every request that meets the condition gives.
        self.needs = frozenset((*names, *self.inside, *(n for c in all_of for n in c.needs)))

    def schema(self) -> dict:
        schema = all_required(self.names) if self.names else {}
        if self.inside or self.value:
            schema["properties"] = {**{k: c.schema() for k, c in self.inside.items()},
                                    **{k: _value_schema(v) for k, v in self.value.items()}}
        if self.any_of:
            schema["anyOf"] = [all_required([name]) for name in self.any_of]
        if self.all_of:
            schema["allOf"] = [c.schema() for c in self.all_of]
        return schema

    def holds(self, data) -> bool:
        if not data.keys() >= self.needs:  # the common case, in C
            return False
        for name, value in self.value.items():
            loaded = data[name]
            if (getattr(loaded, "unit", None) if isinstance(value, Unit) else loaded) != value:
                return False
        for name, cond in self.inside.items():
            if not cond.holds(data[name] or {}):
                return False
        if self.any_of and data.keys().isdisjoint(self.any_of):
            return False
        for cond in self.all_of:
            if not cond.holds(data):
                return False
        return True

    def fields(self) -> tuple[str, ...]:
        return (*self.names, *self.inside, *self.any_of, *(n for c in self.all_of for n in c.fields()))


class Unit(str):
    """A unit as a condition's value: the field was given as {"value": ..., "unit": this}."""


def _value_schema(value) -> dict:
    if isinstance(value, Unit):
        return {"type": "object", "required": ["unit"], "properties": {"unit": {"const": str(value)}}}
    return {"const": value}


# --- rules -----------------------------------------------------------------------------------------

#: What a check returns when the rule holds (shared: never written to).
HOLDS: dict = {}


class Rule:
    """A rule over the fields ``names`` of one schema: ``spec()`` for the spec, ``check(data)`` for the 422.

    Checks run on every request: the common case (the rule holds) costs a set operation or two.
    """

    names: tuple[str, ...] = ()
    #: Rules of one group (same name) that apply to a schema are published together (:class:`Jointly`).
    group: str | None = None

    def spec(self) -> dict:
        raise NotImplementedError

    def check(self, data: dict) -> dict:
        """{field (or "_schema" for the request): message}; empty when the rule holds."""
        raise NotImplementedError


class NotTogether(Rule):
    """At most one of ``names``; ``message(given)`` (or the text) on each field given."""

    def __init__(self, *names: str, message: Message | None = None, why: str = ""):
        self.names, self.name_set = names, frozenset(names)
        self.message = message or (f"Give either {names[0]} or {names[1]}, not both." + (f" {why}" if why else ""))

    def spec(self) -> dict:
        if len(self.names) == 2:
            return {"not": all_required(self.names)}
        return {"oneOf": [NoneOf(*self.names).spec(), *(all_required([name]) for name in self.names)]}

    def check(self, data):
        if len(data.keys() & self.name_set) < 2:
            return HOLDS
        given = [name for name in self.names if name in data]
        return {name: _say(self.message, given) for name in given}


class ExactlyOne(NotTogether):
    """Exactly one of ``names``: ``missing`` (on the request) when none, ``message(given)`` when several."""

    def __init__(self, *names: str, missing: str, message: Message):
        super().__init__(*names, message=message)
        self.missing = missing

    def spec(self):
        return {"oneOf": [all_required([name]) for name in self.names]}

    def check(self, data):
        if data.keys().isdisjoint(self.name_set):
            return {"_schema": self.missing}
        return super().check(data)


class NoneOf(Rule):
    """None of ``names``; ``message(name)`` (or the text, or {name: text}) on each one given."""

    def __init__(self, *names: str, message: Message = ""):
        self.names, self.message = names, message

    def spec(self):
        if len(self.names) == 1:
            return {"not": all_required(self.names)}
        return {"not": {"anyOf": [all_required([name]) for name in self.names]}}

    def check(self, data):
        if data.keys().isdisjoint(self.names):
            return HOLDS
        return {name: _say(self.message, name) for name in self.names if name in data}


class Needs(Rule):
    """Where ``name`` is given, so is each of ``needed``; else ``messages``: {field: text}."""

    def __init__(self, name: str, *needed: str, messages: dict[str, str]):
        self.names, self.needed, self.messages = (name, *needed), frozenset(needed), messages

    def spec(self):
        return {"if": all_required(self.names[:1]), "then": all_required(self.names[1:])}

    def check(self, data):
        if self.names[0] in data and not data.keys() >= self.needed:
            return self.messages
        return HOLDS


class NeedsAny(Rule):
    """Where ``name`` is given, so is at least one of ``alternatives``; else ``message`` on ``name``.

    >>> rule = NeedsAny("total_air_temperature", ("cas", "mach"), message="Give the speed.")
    >>> rule.spec()["then"]
    {'anyOf': [{'required': ['cas']}, {'required': ['mach']}]}
    >>> rule.check({"total_air_temperature": 250.0})
    {'total_air_temperature': 'Give the speed.'}
    >>> rule.check({"total_air_temperature": 250.0, "mach": 0.5})
    {}
    """

    def __init__(self, name: str, alternatives: tuple[str, ...], *, message: str):
        self.names, self.alternatives, self.message = (name, *alternatives), frozenset(alternatives), message

    def spec(self):
        return {"if": all_required(self.names[:1]),
                "then": {"anyOf": [all_required([name]) for name in self.names[1:]]}}

    def check(self, data):
        if self.names[0] in data and data.keys().isdisjoint(self.alternatives):
            return {self.names[0]: self.message}
        return HOLDS


class Never(Rule):
    """A combination the request may not give (``when``); ``message`` on ``field``."""

    def __init__(self, when: Given, field: str, message: str):
        self.when, self.field, self.message = when, field, message
        self.names = when.fields()

    def spec(self):
        return {"not": self.when.schema()}

    def check(self, data):
        return {self.field: self.message} if self.when.holds(data) else HOLDS


class OutputNeeds(Rule):
    """Where ``outputs`` names ``output``, the request satisfies ``then``; else ``message`` on that entry."""

    names = ("outputs",)

    def __init__(self, output: str, then: Given, message: str):
        self.output, self.then, self.message = output, then, message

    def spec(self):
        return {"if": {"required": ["outputs"], "properties": {"outputs": {"contains": {"const": self.output}}}},
                "then": self.then.schema()}

    def check(self, data):
        wanted = data.get("outputs")
        if not wanted or self.output not in wanted or self.then.holds(data):
            return HOLDS
        return {"outputs": {i: self.message for i, name in enumerate(wanted) if name == self.output}}


class Either(Rule):
    """``first`` (every one of them) or ``second``, not both: ``both`` on each of ``first`` given with
    ``second``, ``missing`` on each of ``first`` missing without it."""

    def __init__(self, first: tuple[str, ...], second: tuple[str, ...], *, both: str, missing: str):
        self.first, self.second, self.both, self.missing = first, second, both, missing
        self.names = (*first, *second)

    def spec(self):
        return {"oneOf": [{**all_required(self.first), **NoneOf(*self.second).spec()},
                          {**all_required(self.second), **NoneOf(*self.first).spec()}]}

    def check(self, data):
        if any(name in data for name in self.second):
            return {name: self.both for name in self.first if name in data}
        return {name: self.missing for name in self.first if name not in data}


class Cases(Rule):
    """One case per value of the required field ``field``: {value: (required, missing, rules)}.

    A case needs the fields ``required`` (``missing(value)`` on each one absent) and its ``rules``.
    """

    def __init__(self, field: str, cases: dict[str, tuple[tuple[str, ...], Message, tuple[Rule, ...]]]):
        self.field, self.cases = field, cases
        self.names = (field,)

    def spec(self):
        return {"oneOf": [{"properties": {self.field: {"const": value}}, "required": [self.field, *required],
                           "allOf": [rule.spec() for rule in rules]}
                          for value, (required, _, rules) in self.cases.items()]}

    def check(self, data):
        value = data[self.field]
        required, missing, rules = self.cases[value]
        errors = {name: _say(missing, value) for name in required if name not in data}
        for rule in rules:
            for key, message in rule.check(data).items():
                errors.setdefault(key, message)
        return errors


def grouped(group: str, *rules: Rule) -> tuple[Rule, ...]:
    """``rules``, marked as members of ``group`` (published as one :class:`Jointly` where several apply)."""
    for rule in rules:
        rule.group = group
    return rules
