"""POST /v1/lift/solve, /v1/lift/stall and /v1/lift/curve: the lift equation n W = q S CL solved for any
unknown, stall speeds under load with their multiples and margins, and the wing's lift curve.

One module per endpoint, its request schema beside its view; what they share is in ``common``.
"""

from service.api.lift import solve, stall, curve  # noqa: I001 - in the spec's order: each adds its view to blp
from service.api.lift.common import blp

__all__ = ["blp", "curve", "solve", "stall"]
