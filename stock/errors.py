"""The domain errors of stock: one small hierarchy, each also a built-in exception.

Every message is one line that says what went wrong and how to fix it. The CLI prints
``str(error)`` on stderr and exits 1; no traceback reaches a user.
"""

from __future__ import annotations


class StockError(Exception):
    """Base of every error stock raises on purpose."""

    exit_code = 1


class NotationError(StockError, ValueError):
    """A value in builders' notation could not be read (``4k7k``, ``abc``)."""


class UnknownPart(StockError, KeyError):
    """No part with that number is in the store or the catalog."""

    def __str__(self) -> str:  # KeyError would quote the message
        return str(self.args[0]) if self.args else "unknown part"


class UnknownDrawer(StockError, KeyError):
    """No drawer with that label exists."""

    def __str__(self) -> str:
        return str(self.args[0]) if self.args else "unknown drawer"


class QuantityError(StockError, ValueError):
    """A quantity is zero, negative, or more than is on hand or free."""


class InsufficientStock(QuantityError):
    """A movement or reservation asks for more than is free in a drawer."""


class ImportFileError(StockError, ValueError):
    """A file to import is malformed; the message names file, sheet, row and column."""

    def __init__(
        self,
        message: str,
        *,
        file: str | None = None,
        sheet: str | None = None,
        row: int | None = None,
        column: str | None = None,
    ) -> None:
        self.file, self.sheet, self.row, self.column = file, sheet, row, column
        where = ", ".join(
            part
            for part in (
                file,
                f"sheet {sheet}" if sheet else None,
                f"row {row}" if row is not None else None,
                f"column {column}" if column else None,
            )
            if part
        )
        super().__init__(f"{where}: {message}" if where else message)


class KitFileError(StockError, ValueError):
    """A kit file is malformed; the message names the file and line."""


class UnknownName(StockError, ValueError):
    """A kind, family or parameter name that is not one of ours; the message lists them."""


class ConfigError(StockError, ValueError):
    """The config file or a policy override is malformed."""


class StoreError(StockError, RuntimeError):
    """The store cannot be opened, migrated or verified."""


class BuildError(StockError, ValueError):
    """A build cannot be reserved, built or released as asked."""


def suggest(name: str, choices: list[str], limit: int = 3) -> str:
    """Return ' (did you mean X, Y?)' for the closest of ``choices``, or ''."""
    import difflib

    # short labels (A1, A7) differ by one character in two: a ratio of 0.5
    cutoff = 0.5 if len(name) <= 3 else 0.6
    close = difflib.get_close_matches(name, choices, n=limit, cutoff=cutoff)
    if not close:
        upper = name.upper()
        close = [c for c in choices if upper in c.upper()][:limit]
    return f" (did you mean {', '.join(close)}?)" if close else ""


class PlanError(StockError, ValueError):
    """An allocation problem is malformed (a demand twice, a negative quantity or cost)."""


class FitError(StockError, ValueError):
    """A fit calculation was asked something impossible (a negative L, an empty tie group)."""


class ExportFileError(StockError, ValueError):
    """A table cannot be written as asked (bad path, too many rows for XLSX, a cell too long)."""
