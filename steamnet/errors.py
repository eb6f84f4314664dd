"""Exception hierarchy of steamnet.

Every error that reaches the user derives from :class:`SteamnetError`. Bad input is a
:class:`ModelError` that names the file, the item and the field; the command line turns
it into a one-line message and exit code 2, never a traceback.
"""

from __future__ import annotations


class SteamnetError(Exception):
    """Base class of all steamnet errors."""


class ModelError(SteamnetError):
    """Bad input: names the file, the item and the field.

    Parameters
    ----------
    message : str
        What is wrong and, where it helps, what is allowed.
    file : str, optional
        The model or case file.
    item : str, optional
        The item, e.g. ``"letdown 'PRV-1'"`` or ``"case 'winter'"``.
    field : str, optional
        The field within the item.
    """

    def __init__(self, message: str, *, file: str | None = None, item: str | None = None,
                 field: str | None = None):
        self.message = message
        self.file = file
        self.item = item
        self.field = field
        super().__init__(self.__str__())

    def __str__(self) -> str:
        where = []
        if self.file:
            where.append(str(self.file))
        if self.item:
            where.append(self.item)
        if self.field:
            where.append(f"field '{self.field}'")
        prefix = ": ".join(where)
        return f"{prefix}: {self.message}" if prefix else self.message

    def with_context(self, *, file: str | None = None, item: str | None = None,
                     field: str | None = None) -> "ModelError":
        """A copy with missing location parts filled in."""
        return ModelError(self.message, file=self.file or file, item=self.item or item,
                          field=self.field or field)


class ModelErrors(ModelError):
    """Several input problems found at once; each is a :class:`ModelError`."""

    def __init__(self, errors: list[ModelError]):
        self.errors = list(errors)
        first = self.errors[0]
        super().__init__(first.message, file=first.file, item=first.item, field=first.field)

    def __str__(self) -> str:
        return "\n".join(str(e) for e in self.errors)


class PropertyRangeError(SteamnetError):
    """A water/steam state lies outside the range of IAPWS-IF97."""
