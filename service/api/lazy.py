"""A lock-free cached property for per-request objects (functools.cached_property takes a lock
on Python 3.11, a cost paid on every first access of every request)."""


class lazy:  # noqa: N801 - used like the builtin property
    """Compute the attribute on first access and store it on the instance."""

    def __init__(self, func):
        self.func = func
        self.name = func.__name__
        self.__doc__ = func.__doc__

    def __set_name__(self, owner, name):
        self.name = name

    def __get__(self, obj, owner=None):
        if obj is None:
            return self
        value = obj.__dict__[self.name] = self.func(obj)
        return value
