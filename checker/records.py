"""Value records: what ``@dataclass`` and ``@dataclass(frozen=True)`` give a plain data
type (an ``__init__`` over the annotated fields in order, with defaults and factories,
repr, equality; frozen: hashing and no assignment after construction), at a fraction of
their cost when a module is imported.

dataclasses writes and compiles six methods for every class as its module is imported
(0.4-0.7 ms a class here); the material models, the material-file key table, the
calculation, finding and report types are some 50 such classes, all imported by every
check.  A :class:`Record` or :class:`FrozenRecord` subclass is read once when it is
created (its fields and defaults) and shares generic methods; type checkers see it as a
dataclass (``dataclass_transform``).  Where dataclasses.replace or a field that is not
an ``__init__`` argument is needed, a type stays a dataclass.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from typing import Any, ClassVar, TypeVar, dataclass_transform

T = TypeVar("T")
_MISSING = object()


class _Factory:
    __slots__ = ("make",)

    def __init__(self, make: Callable[[], Any]):
        self.make = make


def field(*, default_factory: Callable[[], T]) -> T:
    """A field whose default is made afresh for each record (as dataclasses.field)."""
    return _Factory(default_factory)  # type: ignore[return-value]


class _Fields:
    """What both records share: the fields read from the annotations when a subclass is
    made, the generic __init__, repr and equality."""

    _fields: ClassVar[tuple[str, ...]] = ()
    _defaults: ClassVar[dict[str, Any]] = {}

    def __init_subclass__(cls, **kwargs: Any) -> None:
        super().__init_subclass__(**kwargs)
        own = [
            name
            for name, kind in cls.__dict__.get("__annotations__", {}).items()
            if not str(kind).startswith(("ClassVar", "typing.ClassVar"))
        ]
        fields = cls._fields + tuple(name for name in own if name not in cls._fields)
        defaults = dict(cls._defaults)
        defaults.update((name, cls.__dict__[name]) for name in own if name in cls.__dict__)
        first_default = min((fields.index(key) for key in defaults), default=len(fields))
        late = [key for key in fields[first_default:] if key not in defaults]
        if late:
            raise TypeError(f"{cls.__name__}: field {late[0]!r} has no default but follows one")
        cls._fields, cls._defaults = fields, defaults

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        fields, name = self._fields, type(self).__name__
        if len(args) > len(fields):
            raise TypeError(f"{name}() takes {len(fields)} arguments but {len(args)} were given")
        values = dict(zip(fields, args))
        for key, value in kwargs.items():
            if key not in fields:
                raise TypeError(f"{name}() got an unexpected keyword argument {key!r}")
            if key in values:
                raise TypeError(f"{name}() got multiple values for argument {key!r}")
            values[key] = value
        for key in fields:
            value = values.get(key, _MISSING)
            if value is _MISSING:
                value = self._defaults.get(key, _MISSING)
                if value is _MISSING:
                    raise TypeError(f"{name}() missing required argument: {key!r}")
                if isinstance(value, _Factory):
                    value = value.make()
            object.__setattr__(self, key, value)
        post = getattr(self, "__post_init__", None)
        if post is not None:
            post()

    def _values(self) -> tuple[Any, ...]:
        return tuple(getattr(self, key) for key in self._fields)

    def __repr__(self) -> str:
        shown = ", ".join(f"{key}={getattr(self, key)!r}" for key in self._fields)
        return f"{type(self).__qualname__}({shown})"

    def __eq__(self, other: object) -> bool:
        if other.__class__ is not self.__class__:
            return NotImplemented
        return self._values() == other._values()  # type: ignore[attr-defined, no-any-return]


@dataclass_transform(eq_default=True, field_specifiers=(field,))
class Record(_Fields):
    """Base of a mutable record, as ``@dataclass``: fields may be assigned, and like a
    dataclass that compares by value it is not hashable."""

    __hash__ = None  # type: ignore[assignment]


@dataclass_transform(eq_default=True, frozen_default=True, field_specifiers=(field,))
class FrozenRecord(_Fields):
    """Base of a frozen record: subclass it and annotate the fields (a ClassVar is no
    field); a field with a default may not precede one without.  ``__post_init__``, where
    a record defines it, runs after the fields are set (it sets any further one with
    ``object.__setattr__``, as in a frozen dataclass)."""

    def __hash__(self) -> int:
        return hash(self._values())

    def __setattr__(self, key: str, value: Any) -> None:
        raise AttributeError(f"cannot assign to field {key!r} of a frozen {type(self).__name__}")

    def __delattr__(self, key: str) -> None:
        raise AttributeError(f"cannot delete field {key!r} of a frozen {type(self).__name__}")


def record_fields(record: _Fields) -> Iterator[tuple[str, Any]]:
    """(name, value) of each field of a record, in order."""
    return ((key, getattr(record, key)) for key in record._fields)
