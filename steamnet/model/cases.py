"""Sets of cases on one model: the cases of the model file, the rows of a case table or
an hourly profile, or both.

A :class:`CaseSpec` says where a case starts from and what it changes; a
:class:`CaseSet` orders them and builds the validated model of each, with the models
that other cases derive from made once (:class:`ValidationMemo` remembers which models
passed validation). :class:`CaseModels` makes the case models of one chunk of a sweep
with as little repeated work as gives the same models. Chains of cases based on cases
are walked by :func:`steamnet.model.chain.case_chain`.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Callable, Iterable

from ..errors import ModelError, ModelErrors
from .chain import CaseLoop, case_chain
from .fields import graph_free, name_list
from .model import Model
from .schema import ITEM_LABELS
from .validate import validate_model, validate_value_changes

__all__ = ["CaseSpec", "CaseSet", "model_case_set", "BASE", "CaseModels",
           "ValidationMemo", "sweep_specs"]

#: Name of the model without case changes.
BASE = "base"
#: Errors listed at the most when a whole set is checked.
MAX_ERRORS = 50


# ------------------------------------------------------------------ case specs
@dataclass(frozen=True)
class CaseSpec:
    """One case of a set: where it starts from and what it changes.

    Attributes
    ----------
    name : str
        Case name (a timestamp for an hourly profile).
    based_on : str or None
        Case it starts from (a row of the same table or a model-file case); None: the
        base of the set.
    description : str
        Free text.
    changes : dict
        ``'table.item.field'`` -> value (quantities as :class:`SI`).
    row : int or None
        Row in the table file (heading = row 1); None for a case of the model file.
    """

    name: str
    based_on: str | None = None
    description: str = ""
    changes: dict = field(default_factory=dict)
    row: int | None = None


class CaseSet:
    """An ordered set of cases on one model: model-file cases, table rows, or both.

    Use :meth:`build` to get the validated :class:`~steamnet.model.Model` of a case;
    models that other cases derive from are cached, so an hourly profile costs one
    ``for_case`` of its base.
    """

    def __init__(self, model: Model, specs: Iterable[CaseSpec], *, source: str | None = None,
                 base: str | None = None, headings: dict[str, str] | None = None,
                 order: Iterable[str] | None = None, kind: str = "model"):
        self.model = model
        self.specs: dict[str, CaseSpec] = {s.name: s for s in specs}
        self.order: list[str] = list(order) if order is not None else list(self.specs)
        self.source = source
        self.base = base
        self.kind = kind                  # "model", "table" or "profile"
        self._headings = headings or {}   # change key -> column heading
        self._parents = {s.based_on or base for s in self.specs.values()} - {None}
        self._cache: dict[str, Model] = {}
        self._valid = ValidationMemo()

    # ---------------------------------------------------------------- access
    @property
    def names(self) -> list[str]:
        return list(self.order)

    def __len__(self) -> int:
        return len(self.order)

    def __iter__(self):
        return iter(self.order)

    def select(self, names: Iterable[str] | None) -> "CaseSet":
        """The same set restricted to ``names`` (all when None or empty); derivations
        from cases left out still work."""
        names = list(names or [])
        if not names:
            return self
        for n in names:
            if n not in self.specs:
                where = self.source or self.model.source
                raise ModelError(f"no case named '{n}' (cases: "
                                 f"{name_list(self.order)})", file=where, item="option --case")
        cs = CaseSet(self.model, self.specs.values(), source=self.source, base=self.base,
                     headings=self._headings, order=names, kind=self.kind)
        return cs

    def description(self, name: str) -> str:
        s = self.specs[name]
        if s.row is None and s.name != BASE:
            return self.model.case(s.name).description
        return s.description

    # ---------------------------------------------------------------- building
    def build(self, name: str) -> Model:
        """The validated model of case ``name`` (``case_name`` set).

        Raises
        ------
        ModelErrors
            A change is not valid for its field, or the case model fails validation;
            errors name the table file, the row and the column.
        """
        if name in self._cache:
            return self._cache[name]
        m = self._build(name)
        if name in self._parents:
            self._cache[name] = m
        return m

    def _row_parent(self, name: str) -> str | None:
        """The table row a row is based on (None when it starts from a model case)."""
        parent = self.specs[name].based_on or self.base
        return parent if parent in self.specs and self.specs[parent].row is not None \
            else None

    def _build(self, name: str) -> Model:
        if name in self._cache:
            return self._cache[name]
        spec = self.specs.get(name)
        if spec is None or spec.row is None:
            return self._model_case(name)
        try:          # guarded at read time; kept for sets made through the API
            case_chain(name, self._row_parent)
        except CaseLoop:
            raise ModelError("cases are based on each other in a loop", file=self.source,
                             item=_row_label(spec), field="based_on") from None
        parent_name = spec.based_on or self.base
        if parent_name is None:
            parent = self.model
        elif self._row_parent(name) is not None:
            parent = self._build(parent_name)
            if parent_name in self._parents:
                self._cache[parent_name] = parent
        else:
            parent = self._model_case(parent_name)
        try:
            m = parent.with_values(spec.changes, origin=_row_label(spec))
        except ModelError as exc:
            raise self._wrap(spec, exc) from None
        m = replace(m, case_name=spec.name)
        try:
            # a row that changes only values validation never reads (demands, duties,
            # heat losses, prices), on a valid parent, is checked for what they touch
            if not (self._valid.passes(parent)
                    and validate_value_changes(m, spec.changes)):
                validate_model(m)
        except ModelError as exc:
            raise self._wrap(spec, exc, validation=True) from None
        return m

    def _model_case(self, name: str) -> Model:
        if name in self._cache:
            return self._cache[name]
        if name == BASE and not any(c.name == BASE for c in self.model.cases):
            m = self.model
        else:
            m = self.model.for_case(name)
            validate_model(m)
            self._valid.mark(m)
        if name in self._parents:
            self._cache[name] = m
        return m

    def check(self, progress: Callable[[int, int, str], None] | None = None) -> None:
        """Build and validate every case; raise one :class:`ModelErrors` listing the
        problems of every row (up to 50)."""
        errors: dict[str, ModelError] = {}   # by text: a bad parent shows once
        n = len(self.order)
        for i, name in enumerate(self.order):
            try:
                self.build(name)
            except ModelError as exc:
                for e in getattr(exc, "errors", [exc]):
                    errors.setdefault(str(e), e)
            if len(errors) >= MAX_ERRORS:
                break
            if progress:
                progress(i + 1, n, name)
        if errors:
            raise ModelErrors(list(errors.values()))

    def _wrap(self, spec: CaseSpec, exc: ModelError, validation: bool = False) -> ModelErrors:
        out = []
        for e in getattr(exc, "errors", [exc]):
            heading = self._heading_for(spec, e)
            what = e.item or ""
            # drop the origin prefix added by with_changes ("row 3 (case 'x'): ")
            prefix = _row_label(spec) + ": "
            what = what[len(prefix):] if what.startswith(prefix) else what
            if what == _row_label(spec):
                what = ""
            case_prefix = f"case '{spec.name}': "
            what = what[len(case_prefix):] if what.startswith(case_prefix) else what
            msg = e.message
            if what and heading is None:
                msg = f"{what}: {msg}" + (f" (field '{e.field}')" if e.field else "")
            elif what:
                msg = f"{what}: {msg}"
            out.append(ModelError(msg, file=self.source, item=_row_label(spec),
                                  field=heading))
        return ModelErrors(out)

    def _heading_for(self, spec: CaseSpec, e: ModelError) -> str | None:
        """The column a model error comes from: the change key itself, or the column
        changing the field of the item the error names."""
        if e.field in self._headings and e.field in spec.changes:
            return self._headings[e.field]
        keys = [k for k in spec.changes if k in self._headings]
        item = e.item or ""
        cands = []
        for k in keys:
            parts = k.split(".")
            if parts[0] in ("site", "prices"):
                if e.field and (e.field == k or e.field.startswith(parts[0])):
                    cands.append(k)
                continue
            label = f"{ITEM_LABELS[parts[0]]} '{parts[1]}'"
            if item.endswith(label):
                cands.append(k)
        if not cands:
            return None
        exact = [k for k in cands if e.field and _field_of(k) == e.field]
        pick = exact or cands
        return ", ".join(self._headings[k] for k in pick)


def _field_of(key: str) -> str:
    parts = key.split(".")
    return ".".join(parts[1:]) if parts[0] in ("site", "prices") else ".".join(parts[2:])


def _row_label(spec: CaseSpec) -> str:
    return f"row {spec.row} (case '{spec.name}')" if spec.row is not None \
        else f"case '{spec.name}'"


def model_case_set(model: Model, names: Iterable[str] | None = None) -> CaseSet:
    """The cases of the model file (all, or ``names``), or the base model alone when
    the file has no cases."""
    specs = [CaseSpec(c.name, c.based_on, c.description) for c in model.cases]
    if not specs:
        specs = [CaseSpec(BASE, None, "the model without case changes")]
    cs = CaseSet(model, specs, kind="model")
    names = list(names or [])
    if names:
        for n in names:
            model.case(n)  # raises naming the known cases
        cs = cs.select(names)
    return cs


class ValidationMemo:
    """Which models passed :func:`~steamnet.model.validate.validate_model`, asked once per
    model object (the models are kept, so that an id stays their own)."""

    def __init__(self):
        self._seen: dict[int, tuple[Model, bool]] = {}

    def passes(self, m: Model) -> bool:
        """Whether ``m`` passes validation (validated on the first question)."""
        got = self._seen.get(id(m))
        if got is None:
            try:
                validate_model(m)
                ok = True
            except ModelError:
                ok = False
            got = self._seen[id(m)] = (m, ok)
        return got[1]

    def require(self, m: Model) -> None:
        """Validate ``m`` unless it passed before; raise its errors when it fails."""
        got = self._seen.get(id(m))
        if got is None or not got[1]:
            validate_model(m)
            self._seen[id(m)] = (m, True)

    def mark(self, m: Model) -> None:
        """Record that ``m`` passed (validated by the caller)."""
        self._seen[id(m)] = (m, True)


class CaseModels:
    """The case models of one chunk of a sweep, made with as little repeated work as
    gives the same models: each ``based_on`` case is made once; the changes that can
    alter the network (modes, equipment in or out of service, anything not in
    ``steamnet.graph.GRAPH_FREE_FIELDS``) are applied once per distinct set; the value
    changes (demands, duties, make-up temperature ...) on top of that, sharing its
    network graph. ``net`` is the last Net solved, the template of the next."""

    def __init__(self, model: Model):
        self.model = model
        self.bases: dict = {}
        self.net = None
        self._valid = ValidationMemo()
        self._last_base = None
        self._last_values: dict = {}

    def validate(self, m: Model, spec) -> None:
        """Validate case model ``m``: fully, unless its base passed and the case's own
        value changes are ones validation never reads (then only what they touch)."""
        base = self._last_base
        if (isinstance(spec, str) or base is None or len(spec) < 2):
            validate_model(m)
            return
        self._valid.require(base)
        if not validate_value_changes(m, self._last_values):
            validate_model(m)

    def _base(self, key, make):
        try:
            m = self.bases.get(key)
        except TypeError:                     # a change value that cannot be hashed
            return make()
        if m is None:
            m = self.bases[key] = make()
            m.graph                           # built once, shared by the cases on m
            try:
                m.stations                    # the same (with_values shares both)
            except ModelError:
                pass                          # reported where a case's checks read it
        return m

    def get(self, spec) -> tuple[Model, str]:
        """(case model, case name) of ``spec``; raises ModelError for a bad one."""
        if isinstance(spec, str):
            return self._base(("case", spec), lambda: self.model.for_case(spec)), spec
        name, changes = spec[0], spec[1]
        based_on = spec[2] if len(spec) > 2 and spec[2] else None
        origin = f"case '{name}'"
        values = {k: v for k, v in changes.items() if graph_free({k: v})}
        other = {k: v for k, v in changes.items() if k not in values}
        base = self._base(("case", based_on), lambda: self.model.for_case(based_on)) \
            if based_on else self.model
        if other:
            base = self._base(("changes", based_on, tuple(other.items())),
                              lambda: base.with_changes(other, origin=origin))
        self._last_base, self._last_values = base, values
        return base.with_values(values, origin=origin), name


def sweep_specs(cs: CaseSet) -> list:
    """The cases of ``cs`` in order as sweep specs: a model-file case by its name, a
    table row as ``(name, changes, based_on)`` with the changes of the rows it is based
    on first and its own last, on the model-file case at the root (None: the model
    itself)."""
    has_base_case = any(c.name == BASE for c in cs.model.cases)
    out = []
    for name in cs:
        spec = cs.specs.get(name)
        if spec is None or spec.row is None:
            out.append(name if name != BASE or has_base_case else (BASE, {}, None))
            continue
        try:
            rows = case_chain(name, cs._row_parent)
        except CaseLoop:
            raise ModelError("cases are based on each other in a loop", file=cs.source,
                             item=f"row {spec.row}", field="based_on") from None
        changes: dict = {}
        for r in reversed(rows):
            changes.update(cs.specs[r].changes)
        parent = cs.specs[rows[-1]].based_on or cs.base
        if parent == BASE and not has_base_case:
            parent = None
        out.append((name, changes, parent))
    return out
