"""Rules published together and the schema that checks rules.

:class:`Jointly` publishes several rules over shared fields as one ``anyOf`` worked out from their own checks
(``rules.grouped`` marks them); :func:`schema_rules` collects a schema's rules (its fields' first, then its
``RULES``, groups joined) and :class:`RuleSchema` checks them once the fields have loaded (api.base publishes
the same list as the schema's ``allOf``).
"""

from __future__ import annotations

import copy
import functools
import itertools
import json

import marshmallow as ma

from service.api.rules import Given, NoneOf, Rule, Unit, all_required


class _Loaded:
    """A loaded value as a check sees it, for :class:`Jointly`'s table: its ``unit`` (a Unit condition)."""

    def __init__(self, unit=None):
        self.unit = unit


#: A value that meets no condition on a field's value.
_OTHER = _Loaded()
#: Jointly's published alternatives, by the rules' own specs (a schema per process, several schemas alike).
_JOINT_SPECS: dict[str, dict] = {}


class Jointly(Rule):
    """Several rules over a few shared fields, checked one by one (their own messages) and published as ONE
    ``anyOf``: the combinations of the fields they allow, as few as the table of their checks reduces to.

    Published separately, rules that share fields multiply in a request generator that expands the schema's
    ``allOf`` into its alternatives (schemathesis gives up past about a hundred); together they count once.
    The alternatives follow from the checks themselves (each combination of the fields given, and of the
    values the rules' conditions name, run through every check), so the spec and the 422 cannot disagree.

    >>> from service.api.rules import Needs, NotTogether
    >>> rule = Jointly(NotTogether("temperature", "isa_deviation"),
    ...                Needs("recovery_factor", "temperature", messages={"recovery_factor": "Needs it."}))
    >>> rule.spec()["anyOf"]  # doctest: +NORMALIZE_WHITESPACE
    [{'not': {'anyOf': [{'required': ['temperature']}, {'required': ['recovery_factor']}]}},
     {'required': ['temperature'], 'not': {'required': ['isa_deviation']}}]
    >>> rule.check({"recovery_factor": 1.0})
    {'recovery_factor': 'Needs it.'}
    """

    def __init__(self, *rules: Rule):
        self.rules = rules
        self.names = tuple(dict.fromkeys(name for rule in rules for name in rule.names))

    def check(self, data):
        errors: dict = {}
        for rule in self.rules:
            for key, message in rule.check(data).items():
                errors.setdefault(key, message)
        return errors

    def _atoms(self) -> list[tuple[str, object]]:
        """(field, None): the field is given; (field, value): it is given with that value (Never's conditions)."""
        atoms: list[tuple[str, object]] = [(name, None) for name in self.names]
        for rule in self.rules:
            for name, value in getattr(getattr(rule, "when", None), "value", {}).items():
                if (name, value) not in atoms:
                    atoms.append((name, value))
        return atoms

    def spec(self):
        key = json.dumps([rule.spec() for rule in self.rules], sort_keys=True)  # the same rules, the same table
        if key not in _JOINT_SPECS:
            _JOINT_SPECS[key] = self._spec()
        return copy.deepcopy(_JOINT_SPECS[key])

    def _spec(self):
        atoms = self._atoms()
        allowed, free = set(), set()
        for bits in itertools.product((0, 1), repeat=len(atoms)):
            data, possible = {}, True
            for (name, value), bit in zip(atoms, bits, strict=True):
                if value is None and bit:
                    data.setdefault(name, _OTHER)
                elif value is not None and bit:
                    possible = possible and bits[atoms.index((name, None))] == 1
                    data[name] = _Loaded(value) if isinstance(value, Unit) else value
            if not possible:
                free.add(bits)  # a value without its field: no request gives it
            elif not self.check(data):
                allowed.add(bits)
        return {"anyOf": [self._term(atoms, term) for term in _cover(allowed, free)]}

    @staticmethod
    def _term(atoms, term) -> dict:
        given = [name for (name, value), bit in zip(atoms, term, strict=True) if value is None and bit == 1]
        absent = [name for (name, value), bit in zip(atoms, term, strict=True) if value is None and bit == 0]
        parts = [all_required(given)] if given else []
        if absent:
            parts.append(NoneOf(*absent).spec())
        for (name, value), bit in zip(atoms, term, strict=True):
            if value is not None and bit is not None:
                condition = Given(name, value={name: value}).schema()
                parts.append(condition if bit else {"not": condition})
        if len(parts) == 2 and "not" in parts[1] and len(parts[1]) == 1 and given:  # {required, not}: one object
            return {**parts[0], **parts[1]}
        return parts[0] if len(parts) == 1 else {"allOf": parts}


def _cover(allowed: set, free: set) -> list[tuple]:
    """Terms (tuples of 0, 1 or None: either) that cover every combination in ``allowed``, nothing outside
    ``allowed | free``, and no combination twice (so that a generator expanding them draws no alternative
    twice): the leaves of the smallest decision tree over the atoms (each split on the atom that gives the
    fewest terms)."""
    size = len(next(iter(allowed | free)))

    @functools.cache
    def tree(fixed: tuple) -> tuple:
        inside = [bits for bits in itertools.product((0, 1), repeat=size)
                  if all(f is None or f == b for f, b in zip(fixed, bits, strict=True))]
        if not any(bits in allowed for bits in inside):
            return ()
        if all(bits in allowed or bits in free for bits in inside):
            return (fixed,)
        return min((tree(fixed[:i] + (0,) + fixed[i + 1:]) + tree(fixed[:i] + (1,) + fixed[i + 1:])
                    for i in range(size) if fixed[i] is None), key=len)

    return sorted(tree((None,) * size), key=str)


# --- the schema that checks them -------------------------------------------------------------------

def schema_rules(schema: ma.Schema) -> list[Rule]:
    """Every rule that applies to ``schema``: its fields' rules in field order, then its ``RULES``; the rules
    of one group (two or more) as one :class:`Jointly` in the place of the first."""
    fields = schema.fields
    rules = [rule for name, field in fields.items() for rule in field_rules(field, field.data_key or name)]
    rules.extend(getattr(schema, "RULES", ()))
    rules = [rule for rule in rules if all(name in fields for name in rule.names)]
    groups: dict[str, list[Rule]] = {}
    for rule in rules:
        if rule.group is not None:
            groups.setdefault(rule.group, []).append(rule)
    out = []
    for rule in rules:
        members = groups.get(rule.group, ()) if rule.group is not None else ()
        if len(members) < 2:
            out.append(rule)
        elif rule is members[0]:
            out.append(Jointly(*members))
    return out


def field_rules(field, name: str) -> list[Rule]:
    """The rules a field carries (``rules_for(name)``: a Number's ``rules=``, an Altitude's own)."""
    rules_for = getattr(field, "rules_for", None)
    return list(rules_for(name)) if rules_for is not None else []


class StrictSchema(ma.Schema):
    """An object of a request (a body, a nested block): an unknown field is a 422, never ignored (marshmallow's
    RAISE, its default, said once here for every request schema; fields keep their declared order)."""

    class Meta:
        unknown = ma.RAISE


class RuleSchema(StrictSchema):
    """A schema that checks its rules (:func:`schema_rules`) once its fields have loaded."""

    @ma.validates_schema
    def _check_rules(self, data, **kwargs):
        checks = self.__dict__.get("_checks")
        if checks is None:  # once per schema instance; a rule the fields check themselves has check None
            checks = self.__dict__["_checks"] = [rule.check for rule in schema_rules(self) if rule.check]
        errors: dict = {}
        for check in checks:
            for key, message in check(data).items():
                if isinstance(message, dict):  # {index: message} of a list field (outputs)
                    for index, text in message.items():
                        errors.setdefault(key, {}).setdefault(index, [text])
                else:
                    errors.setdefault(key, [message])
        if errors:
            raise ma.ValidationError(errors)
