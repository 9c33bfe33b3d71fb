"""A loaded compute request: ComputeSchema (the fields every compute request shares), Inputs (broadcast, grids).

The body is read and checked before the schema loads it (api.request_body).
"""

from __future__ import annotations

import marshmallow as ma
import numpy as np

from service.api.fields import Number, OutputUnits, Value
from service.api.problems import invalid, pointer
from service.api.rule_schema import RuleSchema


class StrictBoolean(ma.fields.Boolean):
    """JSON true or false only (marshmallow's Boolean also takes 0, 1, "yes", ...)."""

    def _deserialize(self, value, attr, data, **kwargs):
        if type(value) is not bool:
            raise self.make_error("invalid", input=value)
        return value


class WholeNumber(ma.fields.Integer):
    """An integer as JSON Schema has it: 3 or 3.0, never true or "3"."""

    def __init__(self, **kwargs):
        super().__init__(strict=True, **kwargs)

    def _deserialize(self, value, attr, data, **kwargs):
        if type(value) is float and value.is_integer():
            value = int(value)
        return super()._deserialize(value, attr, data, **kwargs)


class _WithOutputsField(type(RuleSchema)):
    """Gives a compute request schema its ``outputs`` field, from its OUTPUTS, last (marshmallow's hook for
    fields computed from the class)."""

    @classmethod
    def get_declared_fields(mcs, klass, cls_fields, inherited_fields, dict_cls=dict):  # noqa: N804 (marshmallow's)
        fields = super().get_declared_fields(klass, cls_fields, inherited_fields, dict_cls)
        if klass.OUTPUTS:
            fields.pop("outputs", None)
            fields["outputs"] = outputs_field(klass.OUTPUTS, klass.ON_REQUEST)
        return fields


class ComputeSchema(RuleSchema, metaclass=_WithOutputsField):
    """Base of every compute request: output units, output selection, grid.

    Subclasses list their outputs in ``OUTPUTS`` ({name: (dimension or None, description)}, in the
    answer's order; or a tuple of names when they are nested), which gives them their last field, the
    ``outputs`` selection (outputs_field), and their rules in ``RULES`` (api.rules); every numeric top-level
    field is an axis of the grid, in field order. The outputs in ``ON_REQUEST`` are left out of the default
    selection: they are computed and returned only when ``outputs`` names them.
    """

    OUTPUTS: dict | tuple[str, ...] = ()
    ON_REQUEST: tuple[str, ...] = ()

    def points_worth(self, data: dict, points: int) -> tuple[int, str]:
        """What the point limit counts for a raw (not yet loaded) request of ``points`` points, and how it
        was counted (for the 413; "" for the plain count). One row of the answer per point, unless a schema
        whose answer has more rows per point says otherwise (lift.stall: its speed factors)."""
        return points, ""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        #: The outputs answered when ``outputs`` is not given: every one but those on request, in order.
        self.DEFAULT_OUTPUTS = default_outputs(self.OUTPUTS, self.ON_REQUEST)
        #: The numeric top-level inputs, in field order: the grid's axes, first varying slowest.
        self.AXES = tuple(name for name, field in self.fields.items() if isinstance(field, Number))
        self._plain_fields = all(f.data_key is None and f.attribute is None for f in self.load_fields.values())
        #: Field order, and the fields loaded even when absent (required, or with a default).
        self._order = {name: i for i, name in enumerate(self.load_fields)}
        self._always = frozenset(name for name, f in self.load_fields.items()
                                 if f.required or f.load_default is not ma.missing)

    def _deserialize(self, data, *, error_store, many=False, partial=None, unknown=ma.RAISE, index=None):
        """marshmallow's field loop, lean for the one case a request body is (one flat object):
        an absent optional field without a default costs nothing. Anything else: marshmallow's own.

        marshmallow has no public hook for its field loop; this override of a private method pays on the
        single-point path (about 40 % of a schema load). tests/test_fields.py pins that it loads and refuses
        exactly what marshmallow's own loop does."""
        if many or partial is not None or type(data) is not dict or not self._plain_fields:
            return super()._deserialize(data, error_store=error_store, many=many, partial=partial,
                                        unknown=unknown, index=index)
        loaded = {}
        fields = self.load_fields
        # the fields given and those loaded when absent, in field order (not a pass over every field)
        for name in sorted(self._always.union(data.keys() & self._order.keys()), key=self._order.__getitem__):
            field = fields[name]
            raw = data.get(name, ma.missing)
            try:
                value = field.deserialize(raw, name, data)
            except ma.ValidationError as err:
                error_store.store_error(err.messages, name)
                continue
            if value is not ma.missing:
                loaded[name] = value
        if unknown == ma.RAISE:
            for key in data.keys() - self.load_fields.keys():
                error_store.store_error([self.error_messages["unknown"]], key)
        return loaded

    output_units = OutputUnits(metadata={
        "description": "Units of the outputs, by dimension (keys as GET /v1/units lists them, for example "
                       "{\"altitude\": \"m\", \"speed\": \"km/h\"}); each dimension not named uses its default unit.",
        "example": {"altitude": "m", "speed": "km/h"},
    })
    grid = StrictBoolean(load_default=False, metadata={
        "description": "false (default): array inputs are broadcast point by point (equal lengths, or length 1). "
                       "true: the outer product of the array inputs, flattened with the first-listed axis "
                       "varying slowest; the answer then carries `inputs`, every input at every point.",
        "example": True,
    })

    significant_digits = WholeNumber(validate=ma.validate.Range(1, 17), metadata={
        "description": "Round every number of the answer to this many significant digits (1 to 17), for people "
                       "to read: with 6, 15 degC reads 59 degF and not 58.999999999999986. Default: full "
                       "precision (the nearest double), for machines.",
        "example": 6,
    })

    @ma.post_load
    def _to_request(self, data, **kwargs):
        return Inputs(data, self.AXES, self.OUTPUTS, self.DEFAULT_OUTPUTS)


class OutputNames(ma.fields.List):
    """The ``outputs`` selection: a list of output names (an enum in the spec). Each unknown name is an error
    entry of its own; the valid names are listed once, in the first of them, not in every one."""

    def __init__(self, names: tuple[str, ...], **kwargs):
        super().__init__(ma.fields.String(validate=ma.validate.OneOf(names, error="Unknown output {input!r}.")),
                         **kwargs)
        self.valid = ", ".join(names)

    def _deserialize(self, value, attr, data, **kwargs):
        try:
            return super()._deserialize(value, attr, data, **kwargs)
        except ma.ValidationError as err:
            messages = err.messages
            unknown = sorted(i for i, found in messages.items() if any(m.startswith("Unknown output ") for m in found)
                             ) if type(messages) is dict else []
            if unknown:
                messages[unknown[0]] = [m[:-1] + f"; valid: {self.valid}." if m.startswith("Unknown output ") else m
                                        for m in messages[unknown[0]]]
            raise ma.ValidationError(messages) from None


def default_outputs(names, on_request: tuple[str, ...] = ()) -> tuple[str, ...]:
    """The outputs answered when a request does not select: all of ``names`` but those ``on_request``."""
    return tuple(name for name in names if name not in on_request)


def outputs_field(names, on_request: tuple[str, ...] = ()) -> ma.fields.List:
    """The ``outputs`` selection field for a schema whose outputs are ``names`` (enum and minItems in the spec),
    of which ``on_request`` are answered only when named."""
    names = tuple(names)
    unknown = set(on_request) - set(names)
    if unknown:
        raise TypeError(f"on-request outputs that are not outputs: {sorted(unknown)}")
    default = ("all but " + ", ".join(on_request) + ", which are computed and returned only when named"
               if on_request else "all")
    return OutputNames(names, validate=ma.validate.Length(min=1, error="Name at least one output."),
                       metadata={"description": f"Only these outputs are computed and returned (default: {default}). "
                                                "Valid names: " + ", ".join(names) + ".", "example": list(names[:2])})


class Inputs:
    """A loaded request: the values by field name, broadcast or gridded, and the output choices."""

    def __init__(self, data: dict, axes: tuple[str, ...], outputs: dict | tuple[str, ...],
                 default: tuple[str, ...]):
        self.output_units: dict = data.pop("output_units", None) or {}
        self.grid: bool = data.pop("grid", False)
        self.significant_digits: int | None = data.pop("significant_digits", None)
        wanted = data.pop("outputs", None)
        #: The outputs named, else the schema's default selection (ComputeSchema.DEFAULT_OUTPUTS).
        self.outputs: tuple[str, ...] = tuple(wanted) if wanted is not None else default
        #: Output name -> its dimension (None: a bare number), from the schema's OUTPUTS table.
        self.dimensions: dict = {name: spec[0] for name, spec in outputs.items()} if isinstance(outputs, dict) else {}
        self.data = data
        self.axes = axes
        self.shape: tuple[int, ...] = ()
        self._arranged = False

    def __contains__(self, name: str) -> bool:
        return name in self.data

    def get(self, name, default=None):
        return self.data.get(name, default)

    def wants(self, name: str) -> bool:
        return name in self.outputs

    def arrange(self) -> tuple[int, ...]:
        """Broadcast (or grid) the array inputs in place; return the shape of every output."""
        if self._arranged:
            return self.shape
        self._arranged = True
        present = [(name, self.data[name]) for name in self.axes if isinstance(self.data.get(name), Value)]
        arrays = [(name, v) for name, v in present if v.is_array]
        if not arrays:
            self.shape = ()
            return self.shape
        if self.grid:
            grids = np.meshgrid(*(v.si for _, v in arrays), indexing="ij", copy=False)
            # the numbers as given, crossed alike, for the echo (api.outputs writes them as they are)
            given = np.meshgrid(*(v.si if v.given is None else v.given for _, v in arrays), indexing="ij", copy=False)
            for (name, v), g, raw in zip(arrays, grids, given, strict=False):
                self.data[name] = v._replace(si=g.ravel(), given=None if v.given is None else raw.ravel())
            self.shape = (grids[0].size,)
            return self.shape
        sizes = {name: v.size for name, v in arrays}
        n = max(sizes.values())
        wrong = [name for name, size in sizes.items() if size not in (1, n)]
        if wrong:
            longest = next(name for name, size in sizes.items() if size == n)
            errors = [
                {"pointer": pointer(name), "message": f"Array of length {sizes[name]} does not match "
                                                      f"'{longest}' of length {n} (give equal lengths or length 1)."}
                for name in wrong
            ] + [{"pointer": pointer(longest), "message": f"Array of length {n}."}]
            raise invalid(errors, detail="Array lengths differ: " + ", ".join(
                f"{name} has {size}" for name, size in sizes.items()) + "; give equal lengths or length 1.")
        self.shape = (n,)
        return self.shape

    def si(self, name: str, default=None):
        """The SI values of input ``name`` (0-d or 1-D), or ``default`` when absent."""
        v = self.data.get(name)
        if v is None:
            return default
        return v.si

    def given(self, *names: str) -> list[str]:
        return [name for name in names if name in self.data]


__all__ = ["ComputeSchema", "Inputs", "outputs_field"]
