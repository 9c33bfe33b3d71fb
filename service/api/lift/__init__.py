"""POST /v1/lift/solve, /v1/lift/stall, /v1/lift/curve, /v1/lift/turn and /v1/lift/buffet: the lift equation
n W = q S CL solved for any unknown, stall speeds under load with their multiples and margins, the wing's lift
curve, the level coordinated turn, and the margins to buffet onset.

One module per endpoint, its request schema beside its view; what they share is in ``common``.
"""

from service.api.lift import solve, stall, curve, turn, buffet  # noqa: I001 - in the spec's order: each adds its view
from service.api.lift.common import blp

__all__ = ["blp", "buffet", "curve", "solve", "stall", "turn"]
