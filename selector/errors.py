"""User-facing errors of the selector library.

One base class, :class:`SelectorError`, and a few kinds that also subclass the matching
built-in so that callers catching ``ValueError`` or ``RuntimeError`` keep working. Every
input error carries where it happened (file, sheet, row as the user sees it, column) so
that the command line and the page can print one clear line and never a traceback.
"""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(frozen=True)
class Location:
    """Where a problem sits in the user's input.

    ``row`` is the row number as the user sees it in the spreadsheet (header = row 1 for
    CSV and for a sheet whose header is on its first line). ``field`` is used for design
    files (channel name and field).
    """

    file: str | None = None
    sheet: str | None = None
    row: int | None = None
    column: str | None = None
    channel: str | None = None
    field: str | None = None

    def describe(self) -> str:
        parts: list[str] = []
        if self.file:
            parts.append(str(self.file))
        if self.sheet:
            parts.append(f"sheet '{self.sheet}'")
        if self.row is not None:
            parts.append(f"row {self.row}")
        if self.column:
            parts.append(f"column '{self.column}'")
        if self.channel:
            parts.append(f"channel '{self.channel}'")
        if self.field:
            parts.append(f"field '{self.field}'")
        return ", ".join(parts)


class SelectorError(Exception):
    """Base of every error the library raises on purpose."""

    def __init__(self, message: str, location: Location | None = None):
        self.message = message
        self.location = location or Location()
        super().__init__(self.__str__())

    def __str__(self) -> str:  # one line, place first
        where = self.location.describe()
        return f"{where}: {self.message}" if where else self.message


class InputError(SelectorError, ValueError):
    """An input file (inventory, design) cannot be used as given."""


class InventoryError(InputError):
    """An inventory file cannot be read at all (not a spreadsheet, too large, ...)."""


class DesignError(InputError):
    """A design (conditions and channels) is invalid; may hold several problems."""

    def __init__(
        self,
        message: str,
        location: Location | None = None,
        problems: list[tuple[Location, str]] | None = None,
    ):
        self.problems = list(problems or [])
        super().__init__(message, location)


class SolverError(SelectorError, RuntimeError):
    """The integer-program solver is missing or failed."""


@dataclass
class ProblemList:
    """Collects several (location, message) problems before raising once."""

    items: list[tuple[Location, str]] = field(default_factory=list)

    def add(self, location: Location, message: str) -> None:
        self.items.append((location, message))

    def __bool__(self) -> bool:
        return bool(self.items)
