"""FrozenRecord behaves as the standard library's frozen dataclass does for what the
material models use: construction, defaults and factories, repr, equality, hashing,
immutability, __post_init__ (the reference is Python's own dataclasses module)."""

import dataclasses
import pickle

import pytest

from checker.records import FrozenRecord, field, record_fields, replace


class Gap(FrozenRecord):
    Eg0: float
    alpha: float
    beta: float = 636.0
    sources: dict = field(default_factory=dict)


@dataclasses.dataclass(frozen=True)
class Gap_:  # the same fields as a frozen dataclass
    Eg0: float
    alpha: float
    beta: float = 636.0
    sources: dict = dataclasses.field(default_factory=dict)


CALLS = [
    ((1.17, 4.73e-4), {}),
    ((1.17,), {"alpha": 4.73e-4, "beta": 600.0}),
    ((), {"Eg0": 1.0, "alpha": 2.0}),
]


@pytest.mark.parametrize("args, kwargs", CALLS)
def test_construction_and_repr_match_a_frozen_dataclass(args, kwargs):
    ours, theirs = Gap(*args, **kwargs), Gap_(*args, **kwargs)
    assert list(record_fields(ours)) == [
        (f.name, getattr(theirs, f.name)) for f in dataclasses.fields(theirs)
    ]
    assert repr(ours) == repr(theirs).replace("Gap_(", "Gap(")


def test_a_factory_default_is_made_for_each_record():
    first, second = Gap(1.0, 2.0), Gap(1.0, 2.0)
    assert first.sources == {} and first.sources is not second.sources


def test_equality_and_hash_follow_the_fields_and_the_class():
    class Other(FrozenRecord):
        Eg0: float
        alpha: float

    a, b = Gap(1.0, 2.0, sources=()), Gap(1.0, 2.0, sources=())  # hashable fields
    assert a == b and hash(a) == hash(b)
    assert a != Gap(1.0, 3.0, sources=())
    assert Other(1.0, 2.0) != Gap(1.0, 2.0)  # a dataclass compares only its own class
    # a frozen dataclass hashes the tuple of its fields
    assert hash(a) == hash(Gap_(1.0, 2.0, sources=())) == hash((1.0, 2.0, 636.0, ()))


def test_fields_cannot_be_assigned_or_deleted():
    gap = Gap(1.0, 2.0)
    with pytest.raises(AttributeError):
        gap.Eg0 = 3.0
    with pytest.raises(AttributeError):
        del gap.alpha
    with pytest.raises(dataclasses.FrozenInstanceError):  # what the dataclass raises
        Gap_(1.0, 2.0).Eg0 = 3.0


@pytest.mark.parametrize(
    "args, kwargs",
    [
        ((), {"alpha": 1.0}),
        ((1.0, 2.0, 3.0, {}, 5.0), {}),
        ((1.0,), {"Eg0": 1.0}),
        ((1.0, 2.0), {"x": 1}),
    ],
)
def test_wrong_arguments_are_refused_like_a_dataclass(args, kwargs):
    with pytest.raises(TypeError):
        Gap_(*args, **kwargs)
    with pytest.raises(TypeError):
        Gap(*args, **kwargs)


def test_a_field_without_default_may_not_follow_one_with():
    with pytest.raises(TypeError, match="'b' has no default"):

        class Bad(FrozenRecord):
            a: float = 1.0
            b: float


def test_post_init_runs_after_the_fields_are_set():
    class Bounded(FrozenRecord):
        default: float | None = None
        required: bool = True

        def __post_init__(self):
            if self.default is not None:
                object.__setattr__(self, "required", False)

    assert Bounded(1.0).required is False and Bounded().required is True


def test_a_record_pickles_and_copies():
    gap = Gap(1.0, 2.0, sources={"Eg0": "a handbook"})
    assert pickle.loads(pickle.dumps(gap)) == gap


def test_a_record_may_not_define_its_own_init_and_matches_positionally():
    with pytest.raises(TypeError, match="__post_init__"):

        class Own(FrozenRecord):
            x: int

            def __init__(self, x):
                object.__setattr__(self, "x", x * 10)

    class Point(FrozenRecord):
        x: int
        y: int = 0

    match Point(1, 2):
        case Point(a, b):
            assert (a, b) == (1, 2)


def test_a_mutable_default_is_refused_and_a_record_holding_itself_has_a_repr():
    # the behaviour of dataclasses (Python documentation, dataclasses: "Mutable default
    # values"; reprlib.recursive_repr for self-containing values)
    with pytest.raises(ValueError, match="default_factory"):

        class Shared(FrozenRecord):
            items: list = []  # noqa: RUF012

    from checker.records import Record

    class Box(Record):
        content: object = None

    box = Box()
    box.content = box
    assert repr(box).endswith("<locals>.Box(content=...)")


def test_replace_matches_dataclasses_replace():
    # the same new record as the standard library's dataclasses.replace, and the same
    # refusal of a name that is no field
    ours, theirs = Gap(1.17, 4.73e-4), Gap_(1.17, 4.73e-4)
    changed, reference = replace(ours, beta=600.0), dataclasses.replace(theirs, beta=600.0)
    assert list(record_fields(changed)) == [
        (f.name, getattr(reference, f.name)) for f in dataclasses.fields(reference)
    ]
    assert ours.beta == 636.0 and type(changed) is Gap
    with pytest.raises(TypeError):
        dataclasses.replace(theirs, gamma=1.0)
    with pytest.raises(TypeError):
        replace(ours, gamma=1.0)
