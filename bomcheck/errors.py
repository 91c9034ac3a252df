"""The project's error types: user mistakes become one-line messages and exit status 2."""

from __future__ import annotations

from dataclasses import dataclass, field

from bomcheck.frozen import frozen


class BomcheckError(Exception):
    """Base of every error caused by the user's input rather than by a bug."""

    exit_code = 2


class InputError(BomcheckError, ValueError):
    """A file, row or cell that cannot be used as it is.

    The sentence names the file, the place (row, column or cell), what was found and what was
    expected, so the user can fix the input without reading a traceback.
    """

    def __init__(
        self,
        problem: str,
        *,
        path: str | None = None,
        row: int | None = None,
        column: str | None = None,
        text: str | None = None,
        expected: str | None = None,
        hint: str | None = None,
    ) -> None:
        super().__init__(problem)
        self.problem = problem
        self.path = path
        self.row = row
        self.column = column
        self.text = text
        self.expected = expected
        self.hint = hint

    def __str__(self) -> str:
        where = []
        if self.path:
            where.append(str(self.path))
        if self.row is not None:
            where.append(f"row {self.row}")
        if self.column:
            where.append(f"column {self.column!r}")
        head = ", ".join(where)
        parts = [f"{head}: {self.problem}" if head else self.problem]
        if self.text is not None:
            parts.append(f"found {self.text!r}")
        if self.expected:
            parts.append(f"expected {self.expected}")
        if self.hint:
            parts.append(self.hint)
        return "; ".join(parts)


class UnitError(InputError):
    """A quantity whose unit is unknown or of the wrong dimension."""


@frozen
class RuleProblem:
    """One problem found in a rule file: file, rule id or index, key path and what was expected."""

    path: str
    where: str
    message: str

    def __str__(self) -> str:
        return f"{self.path}: {self.where}: {self.message}"


@dataclass
class RuleError(BomcheckError, ValueError):
    """One or more rule files are invalid; every problem found is listed, not only the first."""

    problems: list[RuleProblem] = field(default_factory=list)

    def __str__(self) -> str:
        n = len(self.problems)
        head = f"{n} problem{'s' if n != 1 else ''} in rule data"
        return head + ":\n" + "\n".join(f"  {p}" for p in self.problems)
