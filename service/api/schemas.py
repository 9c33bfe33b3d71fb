"""Response schemas for the spec. Answers are written by service.api.outputs, not dumped
through these; a test validates real answers against the spec they produce."""

from __future__ import annotations

import marshmallow as ma

from service.api.base import WarningSchema
from service.api.field_schemas import ref, schema_name
from service.api.fields import Number
from service.api.values import unit_for


class QuantityOut(ma.fields.Field):
    """A physical output: {"value": number | [numbers], "unit": "..."}; null where it does not exist.

    In the spec, the named ``QuantityOut`` schema (api.field_schemas.named_schemas).
    """

    def __init__(self, dimension: str, **kwargs):
        super().__init__(**kwargs)
        self.dimension = dimension

    def openapi(self):
        return ref("QuantityOut")


class NumberOut(ma.fields.Field):
    """A dimensionless output: a number or an array of numbers (``NumbersOut`` in the spec)."""

    def openapi(self):
        return ref("NumbersOut")


class LabelOut(ma.fields.Field):
    """A text output: a string or an array of strings from a fixed set."""

    def __init__(self, choices, **kwargs):
        super().__init__(**kwargs)
        self.choices = list(choices)

    def openapi(self):
        # titled, so that generators name one enum after the field (not one numbered type per branch)
        item = {"type": "string", "enum": self.choices, "title": schema_name(self.name)}
        return {"oneOf": [item, {"type": "array", "items": item}]}


class FlagOut(ma.fields.Field):
    """A boolean output: true/false or an array of them."""

    def openapi(self):
        return {"oneOf": [{"type": "boolean"}, {"type": "array", "items": {"type": "boolean"}}]}


class InputsOut(ma.fields.Field):
    """The grid's echo of the numeric inputs: {name: QuantityOut or NumbersOut}. In the spec, one named
    ``InputsEcho`` schema for every endpoint (a type per endpoint would take the generated Python client past
    120 model classes); the description names the endpoint's inputs and their units."""

    def openapi(self):
        return ref("InputsEcho")


def quantity_out(description: str, dimension: str, **kwargs) -> QuantityOut:
    return QuantityOut(dimension, metadata={"description": description}, **kwargs)


def ratio_out(description: str, **kwargs) -> NumberOut:
    return NumberOut(metadata={"description": description}, **kwargs)


def response_schema(inputs: type[ma.Schema], fields: dict | None = None) -> type[ma.Schema]:
    """The response schema class of the compute request schema ``inputs`` (``XRequest`` answers ``XResponse``):
    its outputs (none required: `outputs` may select; those on request say so), warnings, grid inputs.

    The request's OUTPUTS table ({name: (dimension or None, description)}) gives a QuantityOut or NumberOut
    each; ``fields``: other fields, in place of the output of the same name (a label, a flag, a nested block) or
    before them (all of them, when OUTPUTS only names nested outputs).
    """
    name = inputs.__name__.removesuffix("Request") + "Response"
    outputs = inputs.OUTPUTS if isinstance(inputs.OUTPUTS, dict) else {}
    fields = fields or {}
    attrs = {key: field for key, field in fields.items() if key not in outputs}
    for key, (dimension, description) in outputs.items():
        if key in inputs.ON_REQUEST:
            description = "Only when `outputs` names it. " + description
        attrs[key] = fields.get(key) or (quantity_out(description, dimension) if dimension
                                       else ratio_out(description))
    attrs["warnings"] = ma.fields.List(ma.fields.Nested(WarningSchema), required=True, metadata={
        "description": "Outputs that are null or doubtful at some points, with why and where."})
    echoed = [f"`{key}` [{unit_for(f.dimension, {})}]" if getattr(f, "dimension", None) else f"`{key}` [-]"
              for key, f in inputs._declared_fields.items() if isinstance(f, Number)]
    attrs["inputs"] = InputsOut(metadata={
        "description": "Only with grid: true. Every numeric input given, at every point, in the output unit of its "
                       "dimension (default shown), so that each point can be read on its own: "
                       + ", ".join(echoed) + "."})
    return type(name, (ma.Schema,), attrs)
