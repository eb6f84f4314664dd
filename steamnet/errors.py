"""Exception hierarchy of steamnet.

Every error that reaches the user derives from :class:`SteamnetError`. Bad input is a
:class:`ModelError` that names the file, the item and the field; the command line turns
it into a one-line message and exit code 2, never a traceback. An optional package that
is not installed is a :class:`MissingDependencyError` (exit 2, with the command that
installs it); parts of steamnet that disagree with each other, through no fault of the
input, raise :class:`InternalError` (exit 4: please report it).

::

    SteamnetError
    +-- ModelError              bad input: file, item, field
    |   +-- ModelErrors         several at once
    +-- PropertyRangeError      a state outside IAPWS-IF97
    |   +-- ItemPropertyError   ... met by one item of the model (names it)
    +-- MissingDependencyError  an optional package is needed
    +-- InternalError           not the input's fault: please report
    +-- OutputError             a file could not be written (steamnet.io.atomic)
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


class ItemPropertyError(PropertyRangeError):
    """A property call of one item fell outside IAPWS-IF97; names the item.

    Parameters
    ----------
    item : str
        The item, e.g. ``"letdown 'PRV-1'"``.
    exc : PropertyRangeError
        The error of the property call.
    """

    def __init__(self, item: str, exc: PropertyRangeError):
        super().__init__(f"{item}: {exc}")
        self.item = item


class MissingDependencyError(SteamnetError):
    """What was asked for needs an optional package that is not installed.

    Parameters
    ----------
    message : str
        What needs it.
    extra : str
        The extra of steamnet that installs it, e.g. ``"dask"``.
    """

    def __init__(self, message: str, *, extra: str):
        self.message = message
        self.extra = extra
        super().__init__(f"{message}: install it with {self.install}")

    @property
    def install(self) -> str:
        """The command that installs the extra."""
        return f"pip install 'steamnet[{self.extra}]'"


class InternalError(SteamnetError):
    """Parts of steamnet disagree with each other: not the fault of the input, a fault
    of steamnet to be reported."""
