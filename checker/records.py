"""Value records: what ``@dataclass`` and ``@dataclass(frozen=True)`` give a plain data
type (an ``__init__`` over the annotated fields in order, with defaults and factories,
repr, equality; frozen: hashing and no assignment after construction), at a fraction of
their cost when a module is imported.

dataclasses writes and compiles six methods for every class as its module is imported
(0.4-0.7 ms a class here); the material models, the material-file key table, the
calculation, finding and report types are some 50 such classes, all imported by every
check.  A :class:`Record` or :class:`FrozenRecord` subclass is read once when it is
created (its fields and defaults) and shares generic methods; type checkers see it as a
dataclass (``dataclass_transform``); :func:`replace` is their ``dataclasses.replace``.
Where a field that is not an ``__init__`` argument is needed, a type stays a dataclass.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from reprlib import recursive_repr
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


def _written_init(cls: type[_Fields]) -> Callable[..., None]:
    """``__init__(self, <fields, with their defaults>)`` of a record type: the fields are
    assigned (a frozen record's, whose __setattr__ refuses them, go into its __dict__), a factory
    default is called per record, then ``__post_init__`` where the type has one."""
    namespace: dict[str, Any] = {"_MISSING": _MISSING}
    params, body = [], []
    for key in cls._fields:
        default = cls._defaults.get(key, _MISSING)
        if default is _MISSING:
            params.append(key)
        elif isinstance(default, _Factory):
            namespace[f"_factory_{key}"] = default.make
            params.append(f"{key}=_MISSING")
            body.append(f"    if {key} is _MISSING:\n        {key} = _factory_{key}()")
        else:
            namespace[f"_default_{key}"] = default
            params.append(f"{key}=_default_{key}")
    if cls.__setattr__ is object.__setattr__:
        # attribute stores (half the cost of a dict update; the instance keeps its
        # values inline, which makes reading them quicker too)
        body += [f"    self.{key} = {key}" for key in cls._fields]
    else:  # frozen: __setattr__ refuses
        values = ", ".join(f"{key!r}: {key}" for key in cls._fields)
        body.append(f"    self.__dict__.update({{{values}}})")
    if hasattr(cls, "__post_init__"):
        body.append("    self.__post_init__()")
    source = f"def __init__(self, {', '.join(params)}):\n" + "\n".join(body)
    exec(source, namespace)  # our own annotated field names only, never user text
    made: Callable[..., None] = namespace["__init__"]
    made.__qualname__ = f"{cls.__qualname__}.__init__"
    return made


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
        for name in own:  # one list shared by every record: refused, as by dataclasses
            if isinstance(defaults.get(name), (list, dict, set)):
                raise ValueError(
                    f"{cls.__name__}: mutable default for field {name!r}; "
                    "use field(default_factory=...)"
                )
        first_default = min((fields.index(key) for key in defaults), default=len(fields))
        late = [key for key in fields[first_default:] if key not in defaults]
        if late:
            raise TypeError(f"{cls.__name__}: field {late[0]!r} has no default but follows one")
        if "__init__" in cls.__dict__:  # the first instance would replace it
            raise TypeError(f"{cls.__name__}: a record writes its own __init__; use __post_init__")
        cls._fields, cls._defaults = fields, defaults
        cls.__match_args__ = fields  # type: ignore[attr-defined,misc]  # patterns, as a dataclass
        cls.__init__ = _Fields.__init__  # type: ignore[method-assign]  # written on first use

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        # the first record of a type writes that type's own __init__ (as dataclasses do
        # for every type at import): a type made thousands of times per run (a finding)
        # gets a plain function, a type never made costs nothing
        made = _written_init(type(self))
        type(self).__init__ = made  # type: ignore[method-assign]
        made(self, *args, **kwargs)

    def _values(self) -> tuple[Any, ...]:
        return tuple(getattr(self, key) for key in self._fields)

    @recursive_repr()
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


R = TypeVar("R", bound=_Fields)


def replace(record: R, **changes: Any) -> R:
    """A new record of the same type with ``changes`` to its fields (as
    dataclasses.replace: the fields go through ``__init__`` and ``__post_init__`` again)."""
    unknown = set(changes) - set(record._fields)
    if unknown:
        raise TypeError(f"{type(record).__name__} has no field {sorted(unknown)[0]!r}")
    return type(record)(**{**dict(record_fields(record)), **changes})
