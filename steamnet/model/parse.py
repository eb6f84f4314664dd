"""One item from its table as written to a validated schema object.

:func:`validate_item` runs the pydantic class of a table on one item and turns every
validation error into a :class:`~steamnet.errors.ModelError` that names the file, the
item and the field, with the value as the user wrote it.
"""

from __future__ import annotations

from typing import Any

from pydantic import ValidationError

from ..errors import ModelError, ModelErrors
from .schema import SI

__all__ = ["validate_item", "pydantic_errors"]


def pydantic_errors(exc: ValidationError, *, file: str | None, item: str,
                     prefix: str = "") -> list[ModelError]:
    out = []
    for err in exc.errors():
        loc = [str(p) for p in err.get("loc", ())]
        fld = ".".join(loc) if loc else None
        if prefix:
            fld = f"{prefix}.{fld}" if fld else prefix
        msg = err.get("msg", "invalid value")
        typ = err.get("type", "")
        if msg.startswith("Value error, "):
            msg = msg[len("Value error, "):]
        cause = (err.get("ctx") or {}).get("error")
        if getattr(cause, "field", None):
            fld = ".".join([*loc, cause.field]) if loc else cause.field
            if prefix:
                fld = f"{prefix}.{fld}"
            written = (err.get("input") or {}).get(cause.field) \
                if isinstance(err.get("input"), dict) else None
            # as the user wrote it; a value a case table converted to SI from the unit
            # of its column heading is not what the user wrote (the heading is named)
            if isinstance(written, (str, int, float)) and \
                    not isinstance(written, (bool, SI)):
                msg = f"{msg} (written {written!r})"
        if typ == "extra_forbidden":
            msg = "unknown key (check the spelling; see docs/model-file.md)"
        elif typ == "missing":
            msg = "required field is missing"
        elif typ == "literal_error":
            msg = f"{msg}, got {err.get('input')!r}"
        out.append(ModelError(msg, file=file, item=item, field=fld))
    return out


def validate_item(cls, data: Any, *, file: str | None, item: str, context: dict,
                  prefix: str = ""):
    if not isinstance(data, dict):
        raise ModelErrors([ModelError(f"expected a table of fields, got "
                                      f"{type(data).__name__}", file=file, item=item,
                                      field=prefix or None)])
    try:
        return cls.model_validate(data, context=context)
    except ValidationError as exc:
        raise ModelErrors(pydantic_errors(exc, file=file, item=item, prefix=prefix)) \
            from None
