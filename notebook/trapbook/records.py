"""The records a chemist keeps: compounds, lines, ordered steps, outcomes, runs, screens.

These pydantic models are the run file format (``schemas/run.schema.json`` is generated
from them) and the stored form in the notebook. They check everything that makes a
record unreadable — wrong units, two amounts on one line, unknown roles, bad SMILES,
duplicate line names — and leave judgement calls (late trap, low equiv, a step naming
a missing line) to the bench checks, so a planned run with mistakes can still be kept.
"""

from __future__ import annotations

import datetime as _dt
import json
import re
from typing import Any, Literal

from pydantic import BaseModel, ConfigDict, Field, ValidationError, field_validator, model_validator

from .errors import ChemistryError, RecordError, UnitError
from .units import (
    Amount,
    Density,
    Duration,
    Equiv,
    Fraction,
    Mass,
    Molarity,
    MolarMass,
    Temperature,
    Volume,
    to_canonical,
)

ROLES = ("precursor", "fluoride source", "additive", "trap", "solvent", "internal standard", "product")
Role = Literal["precursor", "fluoride source", "additive", "trap", "solvent", "internal standard", "product"]
AMOUNT_FIELDS = ("equiv", "amount", "mass", "volume")
STATUSES = ("planned", "running", "done", "failed")

#: Role spellings people type, mapped to the stored role.
_ROLE_ALIASES = {
    "fluoride": "fluoride source",
    "fluoride_source": "fluoride source",
    "activator": "fluoride source",
    "internal_standard": "internal standard",
    "standard": "internal standard",
    "is": "internal standard",
    "trapping agent": "trap",
    "reagent": "additive",
}

_RATIO = re.compile(r"^\s*(\d+(?:\.\d+)?)\s*[:/]\s*(\d+(?:\.\d+)?)\s*$")


class _Model(BaseModel):
    model_config = ConfigDict(extra="forbid", str_strip_whitespace=True, validate_assignment=False)


def _check_smiles(value: str | None, what: str) -> str | None:
    if value is None or value == "":
        return None
    from .chemistry import molecules  # chemistry is core; imported lazily to keep startup fast

    try:
        molecules.parse(value, what)
    except ChemistryError as exc:
        raise ValueError(f"{exc.message}; {exc.hint}") from None
    return value


def _positive(q, what: str):
    if q is not None and q.magnitude <= 0:
        raise ValueError(f"{what} must be greater than zero (got {q.magnitude:g} {q.units:~})")
    return q


def parse_ratio(text: str) -> tuple[float, float]:
    """'5:1' or '95:5' -> (5.0, 1.0); ValueError with a plain message otherwise."""
    m = _RATIO.match(str(text))
    if not m:
        raise ValueError(f"ratio '{text}' is not written as major:minor (e.g. '5:1')")
    a, b = float(m.group(1)), float(m.group(2))
    if a == 0 and b == 0:
        raise ValueError(f"ratio '{text}' has both parts zero")
    return a, b


class Line(_Model):
    """One material in the flask: a compound, its role, and exactly one given amount.

    Compound data (SMILES, density of a neat liquid, molarity of a stock solution, purity,
    water content of the form used) lives on the line, because the same reagent is used
    in different forms from run to run.
    """

    role: Role
    name: str = Field(min_length=1, max_length=200)
    smiles: str | None = Field(default=None, description="SMILES of the form weighed, hydrate water and counter-ions included")
    equiv: Equiv | None = None
    amount: Amount | None = None
    mass: Mass | None = None
    volume: Volume | None = None
    molarity: Molarity | None = Field(default=None, description="stock solution concentration; the amount is then dispensed by volume")
    density: Density | None = Field(default=None, description="density of a neat liquid")
    purity: Fraction | None = Field(default=None, description="assay of the material, e.g. '98 %'")
    water: Fraction | None = Field(default=None, description="water content of the form used, e.g. '5 wt%'")
    molar_mass: MolarMass | None = Field(default=None, description="explicit molar mass; overrides the one computed from SMILES")
    limiting: bool = False
    lot: str | None = None
    note: str | None = None

    @field_validator("role", mode="before")
    @classmethod
    def _role(cls, v: Any) -> Any:
        if isinstance(v, str):
            key = v.strip().lower()
            return _ROLE_ALIASES.get(key, key)
        return v

    @field_validator("smiles")
    @classmethod
    def _smiles(cls, v: str | None) -> str | None:
        return _check_smiles(v, "SMILES")

    @model_validator(mode="after")
    def _one_amount(self) -> "Line":
        given = [f for f in AMOUNT_FIELDS if getattr(self, f) is not None]
        if self.role == "product":
            if given:
                raise ValueError("a product line carries no amount; record what was obtained in the outcome")
        elif len(given) != 1:
            if not given:
                raise ValueError("give exactly one of equiv, amount, mass or volume")
            raise ValueError(f"give exactly one of equiv, amount, mass or volume (got {', '.join(given)})")
        for f in ("amount", "mass", "volume", "molarity", "density", "molar_mass"):
            _positive(getattr(self, f), f)
        if self.equiv is not None and self.equiv.magnitude <= 0:
            raise ValueError(f"equiv must be greater than zero (got {self.equiv.magnitude:g})")
        for f in ("purity", "water"):
            q = getattr(self, f)
            if q is not None:
                frac = to_canonical(q, "fraction")
                if f == "purity" and not 0 < frac <= 1:
                    raise ValueError(f"purity must be above 0 and at most 100 % (got {frac * 100:g} %)")
                if f == "water" and not 0 <= frac < 1:
                    raise ValueError(f"water content must be from 0 to below 100 % (got {frac * 100:g} %)")
        if self.molarity is not None and self.density is not None:
            raise ValueError("give molarity (stock solution) or density (neat liquid), not both")
        if self.limiting and self.equiv is not None:
            raise ValueError("the limiting line needs an amount, mass or volume, not equiv")
        return self

    @property
    def given(self) -> str | None:
        for f in AMOUNT_FIELDS:
            if getattr(self, f) is not None:
                return f
        return None


class Step(_Model):
    """One thing done to the flask, in order: what went in, at what temperature, for how long."""

    add: list[str] = Field(default_factory=list, description="names of the lines added in this step")
    temperature: Temperature | None = None
    hold: Duration | None = Field(default=None, description="how long the flask is kept at this temperature after the additions")
    over: Duration | None = Field(default=None, description="addition time (e.g. dropwise over 10 min)")
    sealed: bool = Field(default=False, description="vessel closed (pressure builds on heating)")
    atmosphere: str | None = None
    note: str | None = None

    @field_validator("add", mode="before")
    @classmethod
    def _add(cls, v: Any) -> Any:
        if isinstance(v, str):
            return [v]
        return v


class QNMR(_Model):
    """Integrals for an NMR yield against an internal standard."""

    standard: str | None = Field(default=None, description="name of the internal standard line (default: the run's only one)")
    standard_amount: Amount | None = Field(default=None, description="amount of standard in the sample, if not from the line")
    standard_integral: float = Field(gt=0)
    standard_protons: int = Field(gt=0, le=100)
    integral: float = Field(ge=0)
    protons: int = Field(gt=0, le=100)


class ProductResult(_Model):
    """What one product came to: isolated mass and/or an NMR yield, and its selectivity."""

    product: str = Field(min_length=1, description="name of the product line")
    isolated_mass: Mass | None = None
    qnmr: QNMR | None = None
    dr: str | None = Field(default=None, description="diastereomer ratio, major:minor, e.g. '5:1'")
    er: str | None = Field(default=None, description="enantiomer ratio, major:minor, e.g. '95:5'")
    ee: float | None = Field(default=None, description="enantiomeric excess in percent")
    note: str | None = None

    @field_validator("dr", "er", mode="before")
    @classmethod
    def _ratio(cls, v: Any) -> Any:
        if v is None or v == "":
            return None
        if isinstance(v, (int, float)) and not isinstance(v, bool):
            v = f"{v}:1"
        parse_ratio(v)
        return str(v).replace(" ", "")

    @model_validator(mode="after")
    def _positive_mass(self) -> "ProductResult":
        if self.isolated_mass is not None and self.isolated_mass.magnitude < 0:
            raise ValueError("isolated mass cannot be negative")
        return self


class Outcome(_Model):
    products: list[ProductResult] = Field(default_factory=list)
    recovered_precursor: Mass | None = Field(default=None, description="mass of precursor recovered")
    observations: str | None = None


class Attachment(_Model):
    """A file kept beside the run (spectrum, photo, raw NMR data), known by its SHA-256."""

    name: str
    sha256: str = Field(pattern=r"^[0-9a-f]{64}$")
    size: int = Field(ge=0)
    media_type: str | None = None
    added: str | None = None


class Run(_Model):
    """One experiment: the lines, the order of additions, and what came of it."""

    id: str | None = Field(default=None, description="notebook id; assigned when first saved")
    title: str = Field(min_length=1, max_length=300)
    chemist: str | None = None
    date: _dt.date | None = None
    page: str | None = Field(default=None, description="paper notebook page reference")
    screen: str | None = Field(default=None, description="id of the screen this run belongs to")
    factors: dict[str, str] = Field(default_factory=dict, description="levels of the screen's varied conditions in this run")
    status: Literal["planned", "running", "done", "failed"] = "done"
    tags: list[str] = Field(default_factory=list)
    intermediate: str | None = Field(default=None, description="SMILES of the strained intermediate the run releases")
    intermediate_name: str | None = None
    limiting: str | None = Field(default=None, description="name of the limiting line (default: the precursor)")
    lines: list[Line] = Field(min_length=1)
    steps: list[Step] = Field(default_factory=list)
    outcome: Outcome | None = None
    notes: str | None = None
    attachments: list[Attachment] = Field(default_factory=list)

    @field_validator("intermediate")
    @classmethod
    def _intermediate(cls, v: str | None) -> str | None:
        return _check_smiles(v, "intermediate SMILES")

    @field_validator("tags", mode="before")
    @classmethod
    def _tags(cls, v: Any) -> Any:
        if isinstance(v, str):
            return [t.strip() for t in v.split(",") if t.strip()]
        return v

    @model_validator(mode="after")
    def _names(self) -> "Run":
        seen: set[str] = set()
        for line in self.lines:
            key = line.name.casefold()
            if key in seen:
                raise ValueError(f"two lines are called '{line.name}'; give each line its own name")
            seen.add(key)
        if self.limiting is not None and self.limiting.casefold() not in seen:
            raise ValueError(f"limiting line '{self.limiting}' is not one of the lines")
        flagged = [ln.name for ln in self.lines if ln.limiting]
        if len(flagged) > 1:
            raise ValueError(f"more than one line is marked limiting: {', '.join(flagged)}")
        if self.outcome:
            for p in self.outcome.products:
                if p.product.casefold() not in seen:
                    raise ValueError(f"outcome names product '{p.product}', which is not one of the lines")
                if p.qnmr and p.qnmr.standard and p.qnmr.standard.casefold() not in seen:
                    raise ValueError(f"qNMR standard '{p.qnmr.standard}' is not one of the lines")
        return self

    def line(self, name: str) -> Line | None:
        key = name.casefold()
        return next((ln for ln in self.lines if ln.name.casefold() == key), None)

    def lines_by_role(self, role: str) -> list[Line]:
        return [ln for ln in self.lines if ln.role == role]

    def to_json_dict(self) -> dict:
        """The stored form: every quantity as {"value", "unit"}, no empty optionals."""
        return self.model_dump(mode="json", exclude_none=True, exclude_defaults=False)


class Screen(_Model):
    """A named set of runs that vary stated conditions around one base."""

    id: str | None = None
    name: str = Field(min_length=1, max_length=200)
    description: str | None = None
    factors: dict[str, list[str]] = Field(default_factory=dict, description="varied condition -> levels")
    runs: list[str] = Field(default_factory=list, description="ids of the runs in the screen")
    base_run: str | None = None
    chemist: str | None = None
    scale: str | None = None


def _locate(data: Any, loc: tuple) -> str:
    """Turn a pydantic error location into words a chemist recognises ("line 'furan': volume")."""
    parts: list[str] = []
    node = data
    i = 0
    while i < len(loc):
        key = loc[i]
        if key == "lines" and i + 1 < len(loc) and isinstance(loc[i + 1], int):
            idx = loc[i + 1]
            name = None
            try:
                name = node["lines"][idx].get("name")
            except Exception:
                pass
            parts.append(f"line '{name}'" if name else f"line {idx + 1}")
            try:
                node = node["lines"][idx]
            except Exception:
                node = None
            i += 2
            continue
        if key == "steps" and i + 1 < len(loc) and isinstance(loc[i + 1], int):
            parts.append(f"step {loc[i + 1] + 1}")
            try:
                node = node["steps"][loc[i + 1]]
            except Exception:
                node = None
            i += 2
            continue
        if key == "products" and i + 1 < len(loc) and isinstance(loc[i + 1], int):
            name = None
            try:
                name = node["products"][loc[i + 1]].get("product")
            except Exception:
                pass
            parts.append(f"product '{name}'" if name else f"product {loc[i + 1] + 1}")
            try:
                node = node["products"][loc[i + 1]]
            except Exception:
                node = None
            i += 2
            continue
        if isinstance(key, str) and not key.startswith("function-"):
            parts.append(key)
        try:
            node = node[key] if node is not None else None
        except Exception:
            node = None
        i += 1
    return ": ".join(parts[:1] + [" ".join(parts[1:])]) if len(parts) > 1 else (parts[0] if parts else "record")


def explain(exc: ValidationError, data: Any, what: str = "run") -> RecordError:
    """One RecordError listing every problem, each named by record and field."""
    problems = []
    for err in exc.errors():
        where = _locate(data, tuple(err.get("loc", ())))
        ctx = err.get("ctx") or {}
        cause = ctx.get("error")
        if isinstance(cause, UnitError):
            problems.append(f"{where} {cause.message}")
            continue
        msg = err.get("msg", "invalid")
        msg = msg.removeprefix("Value error, ")
        if err.get("type") == "extra_forbidden":
            msg = "is not a field Trapbook knows (check the spelling)"
        elif err.get("type") == "missing":
            msg = "is required"
        elif err.get("type") == "literal_error" and where.endswith("role"):
            msg = f"{err.get('input')!r} is not one of: {', '.join(ROLES)}"
        problems.append(f"{where}: {msg}" if where else msg)
    title = data.get("title") if isinstance(data, dict) else None
    head = f"{what} '{title}'" if title else what
    if len(problems) == 1:
        return RecordError(f"{head}: {problems[0]}", "correct the field and try again")
    return RecordError(f"{head} has {len(problems)} problems:\n  - " + "\n  - ".join(problems), "correct the fields and try again")


def load_run(data: Any) -> Run:
    """A Run from a parsed run file (dict), or a RecordError naming record and field."""
    if isinstance(data, Run):
        return data
    if not isinstance(data, dict):
        raise RecordError("a run must be a JSON object with at least 'title' and 'lines'", "see schemas/run.schema.json")
    try:
        return Run.model_validate(data)
    except ValidationError as exc:
        raise explain(exc, data) from None
    except UnitError as exc:  # a quantity outside a pydantic field context
        raise RecordError(exc.message, exc.hint) from None


def load_run_text(text: str, source: str = "run file") -> Run:
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise RecordError(f"{source} is not valid JSON (line {exc.lineno}, column {exc.colno}: {exc.msg})", "fix the JSON syntax") from None
    except RecursionError:
        raise RecordError(f"{source} is nested too deeply to be a run file", "check the file is a Trapbook run (JSON)") from None
    return load_run(data)


def load_screen(data: Any) -> Screen:
    if not isinstance(data, dict):
        raise RecordError("a screen must be a JSON object", "see schemas/screen.schema.json")
    try:
        return Screen.model_validate(data)
    except ValidationError as exc:
        raise explain(exc, data, "screen") from None


def canonical_json(obj: Any) -> str:
    """Deterministic JSON for hashing: sorted keys, no spaces, UTF-8 kept."""
    return json.dumps(obj, sort_keys=True, separators=(",", ":"), ensure_ascii=False)
