"""Every problem of one input reported at once: a document's readers record each
InputError and go on, then raise them together.  (Kept apart from yaml_source so that
a check whose files the line reader reads never imports PyYAML.)"""

from __future__ import annotations

from ..errors import InputError


class InputErrors(InputError):
    """Several problems of one input, each a message naming file:line:column."""

    def __init__(self, messages):
        self.messages = list(messages)
        super().__init__("\n".join(self.messages))


class Problems:
    """Collects input errors so that one document reports all of them at once."""

    def __init__(self):
        self.messages = []

    def add(self, error: InputError):
        self.messages += getattr(error, "messages", None) or [str(error)]

    def run(self, step, *args, default=None):
        """``step(*args)``, or ``default`` after recording its InputError."""
        try:
            return step(*args)
        except InputError as exc:
            self.add(exc)
            return default

    def raise_any(self):
        if self.messages:
            raise (
                InputErrors(self.messages)
                if len(self.messages) > 1
                else InputError(self.messages[0])
            )
