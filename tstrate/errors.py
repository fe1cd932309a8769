"""One exception family for user mistakes.

Everything that is the user's fault (a bad file, a bad key, an impossible
value) raises :class:`InputError`. Anything else is a bug and may raise
whatever it raises. The CLI turns an InputError into one line on stderr and
exit status 2.
"""

from __future__ import annotations


class InputError(ValueError):
    """A user mistake in an input file, a CLI option or an API argument.

    Parameters
    ----------
    problem:
        What is wrong, in a few words.
    file:
        The file the value came from, if any.
    field:
        The key (dotted path for nested keys) or CLI option, if any.
    hint:
        What to do about it, if there is something useful to say.
    """

    def __init__(self, problem: str, *, file: str | None = None,
                 field: str | None = None, hint: str | None = None):
        self.problem = problem
        self.file = None if file is None else str(file)
        self.field = field
        self.hint = hint
        super().__init__(str(self))

    def __str__(self) -> str:
        where = []
        if self.file:
            where.append(self.file)
        if self.field:
            where.append(f"[{self.field}]")
        head = " ".join(where)
        msg = f"{head}: {self.problem}" if head else self.problem
        if self.hint:
            msg += f" ({self.hint})"
        return msg

    def located(self, *, file: str | None = None, field: str | None = None) -> "InputError":
        """Return a copy that fills in the file and field where they are missing."""
        return InputError(self.problem, file=self.file or file,
                          field=self.field or field, hint=self.hint)

    def within(self, *, file: str | None = None, prefix: str | None = None) -> "InputError":
        """A copy placed inside a file's section: fills in ``file`` where missing and puts
        ``prefix`` in front of the key (``prefix.key``), or uses ``prefix`` when there is no key.

        The study and species readers call this once, at the boundary, on errors raised by
        records and physics that name only their own parameter."""
        if self.file is not None:
            return self  # already placed (e.g. in a species file named by the study, or a study key)
        field = self.field
        if prefix:
            field = f"{prefix}.{field}" if field else prefix
        return InputError(self.problem, file=self.file or file, field=field, hint=self.hint)
