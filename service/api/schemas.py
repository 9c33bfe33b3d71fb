"""Response schemas for the spec. Answers are written by service.api.outputs, not dumped
through these; a test validates real answers against the spec they produce."""

from __future__ import annotations

import marshmallow as ma

from service.api.base import WarningSchema
from service.api.fields import Number
from service.api.outputs import unit_for

_NUMBERS = {"oneOf": [{"type": ["number", "null"]}, {"type": "array", "items": {"type": ["number", "null"]}}]}


class QuantityOut(ma.fields.Field):
    """A physical output: {"value": number | [numbers], "unit": "..."}; null where it does not exist."""

    def openapi(self):
        return {
            "type": "object",
            "properties": {
                "value": dict(_NUMBERS, description="The number (scalar inputs) or one number per point; null where "
                                                     "the value does not exist (see warnings)."),
                "unit": {"type": "string", "description": "The unit of value (see output_units)."},
            },
            "required": ["value", "unit"],
            "additionalProperties": False,
        }


class NumberOut(ma.fields.Field):
    """A dimensionless output: a number or an array of numbers."""

    def openapi(self):
        return dict(_NUMBERS)


class LabelOut(ma.fields.Field):
    """A text output: a string or an array of strings from a fixed set."""

    def __init__(self, choices, **kwargs):
        super().__init__(**kwargs)
        self.choices = list(choices)

    def openapi(self):
        item = {"type": "string", "enum": self.choices}
        return {"oneOf": [item, {"type": "array", "items": item}]}


class FlagOut(ma.fields.Field):
    """A boolean output: true/false or an array of them."""

    def openapi(self):
        return {"oneOf": [{"type": "boolean"}, {"type": "array", "items": {"type": "boolean"}}]}


def quantity_out(description: str, **kwargs) -> QuantityOut:
    return QuantityOut(metadata={"description": description}, **kwargs)


def ratio_out(description: str, **kwargs) -> NumberOut:
    return NumberOut(metadata={"description": description}, **kwargs)


def response_schema(name: str, outputs: dict, inputs: type[ma.Schema] | None = None,
                    fields: dict | None = None) -> type[ma.Schema]:
    """A response schema class: the outputs (none required: `outputs` may select), warnings, grid inputs.

    ``outputs``: {name: (dimension or None, description)}, a QuantityOut or NumberOut each; ``fields``:
    other fields, in place of the output of the same name (a label, a flag, a nested block) or before them.
    """
    fields = fields or {}
    attrs = {key: field for key, field in fields.items() if key not in outputs}
    for key, (dimension, description) in outputs.items():
        attrs[key] = fields.get(key) or (quantity_out(description) if dimension else ratio_out(description))
    attrs["warnings"] = ma.fields.List(ma.fields.Nested(WarningSchema), required=True, metadata={
        "description": "Outputs that are null or doubtful at some points, with why and where."})
    if inputs is not None:
        input_fields = {
            key: (quantity_out(f"`{key}` as given, at every point, in the output unit of its dimension "
                               f"[{unit_for(f.dimension, {})}].") if getattr(f, "dimension", None)
                  else ratio_out(f"`{key}` as given, at every point [-]."))
            for key, f in inputs._declared_fields.items() if isinstance(f, Number)
        }
        inputs_schema = type(name + "Inputs", (ma.Schema,), input_fields)
        attrs["inputs"] = ma.fields.Nested(inputs_schema, metadata={
            "description": "Only with grid: true. Every numeric input at every point, in the output units of its "
                           "dimension, so that each point can be read on its own."})
    return type(name, (ma.Schema,), attrs)
