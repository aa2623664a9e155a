"""Exception types of regimecheck.  Every message says what to change."""


class RegimecheckError(Exception):
    """Base class for errors the tool reports to the user (never a traceback)."""


class InputError(RegimecheckError, ValueError):
    """A value given to the tool is unusable (negative density, unknown order, ...)."""


class UnknownMaterialError(InputError):
    """A material name that is neither built in nor defined by the user."""


class UnknownDopantError(InputError):
    """A dopant species the material does not know."""


class MissingParameterError(InputError):
    """A user-defined material lacks a parameter some computation needs."""


class ConvergenceError(RegimecheckError, ArithmeticError):
    """A numerical solve did not meet its tolerance (reported, never silent)."""
