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
from pathlib import Path
from typing import Any, Literal

from pydantic import Field, ValidationError, ValidationInfo, field_validator, model_validator

from . import bench_words
from .bench_words import BenchWords
from .errors import ChemistryError, RecordError, UnitError
from .json_text import loads_once
from .outcome_records import (
    HRMS,
    INTEGRAL_MAX,
    INTEGRAL_MIN,
    MAX_PRODUCTS,
    QNMR,
    Outcome,
    ProductResult,
    SpectrumRecord,
    parse_ratio,
)
from .record_errors import explain
from .record_model import RecordModel as _Model
from .stored_reading import input_rules_apply, reading_stored
from .text_rules import Note, RunId, SingleLine, SmilesText, Title, validate_run_id
from .units import (
    Amount,
    Density,
    Duration,
    Equiv,
    Fraction,
    Mass,
    Measured,
    Molarity,
    MolarMass,
    Temperature,
    Volume,
    shown_input,
    to_canonical,
)

__all__ = [
    "Line",
    "Step",
    "Run",
    "Screen",
    "load_run",
    "load_run_text",
    "load_screen",
    "validate_run_id",
    "BenchWords",
    "with_bench_words",
    "Outcome",
    "ProductResult",
    "QNMR",
    "HRMS",
    "SpectrumRecord",
    "parse_ratio",
    "INTEGRAL_MAX",
    "INTEGRAL_MIN",
    "MAX_PRODUCTS",
]

#: Most lines, steps, tags and attachments a record holds (products: outcome_records.MAX_PRODUCTS);
#: far above any real run, low enough that a crafted file cannot make every view crawl. Common practice, no source.
MAX_LINES = 200
MAX_STEPS = 200
MAX_TAGS = 50
MAX_ATTACHMENTS = 1000

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


class Line(_Model):
    """One material in the flask: a compound, its role, and exactly one given amount.

    Compound data (SMILES, density of a neat liquid, molarity of a stock solution, purity,
    water content of the form used) lives on the line, because the same reagent is used
    in different forms from run to run.
    """

    role: Role
    name: SingleLine = Field(min_length=1)
    smiles: SmilesText | None = Field(
        default=None, description="SMILES of the form weighed, hydrate water and counter-ions included"
    )
    equiv: Equiv | None = None
    amount: Amount | None = None
    mass: Mass | None = None
    volume: Volume | None = None
    molarity: Molarity | None = Field(
        default=None, description="stock solution concentration; the amount is then dispensed by volume"
    )
    density: Density | None = Field(default=None, description="density of a neat liquid")
    purity: Fraction | None = Field(default=None, description="assay of the material, e.g. '98 %'")
    water: Fraction | None = Field(default=None, description="water content of the form used, e.g. '5 wt%'")
    molar_mass: MolarMass | None = Field(default=None, description="explicit molar mass; overrides the one computed from SMILES")
    limiting: bool = False
    actual: Measured | None = Field(
        default=None,
        description=(
            "what was actually weighed or measured, once done: a mass, volume or amount ('31.2 mg'); "
            "equiv, concentration and yields are then worked out from it"
        ),
    )
    lot: SingleLine | None = None
    note: Note | None = None

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
    def _one_amount(self) -> Line:
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
        if self.actual is not None:
            if self.role == "product":
                raise ValueError("a product line has nothing weighed in; record what was obtained in the outcome")
            _positive(self.actual, "actual (what was weighed or measured)")
        return self

    @property
    def given(self) -> str | None:
        for f in AMOUNT_FIELDS:
            if getattr(self, f) is not None:
                return f
        return None


class Step(_Model):
    """One thing done to the flask, in order: what went in, at what temperature, for how long."""

    add: list[SingleLine] = Field(default_factory=list, max_length=MAX_LINES, description="names of the lines added in this step")
    temperature: Temperature | None = Field(
        default=None,
        description=(
            "the step's temperature, or the start of a ramp; also written as the bench says it: "
            "'rt', 'reflux', '0 °C to rt' (the words are kept in temperature_written)"
        ),
    )
    temperature_end: Temperature | None = Field(
        default=None, description="where a ramp ends ('0 °C to rt' ends at room temperature)"
    )
    temperature_written: SingleLine | None = Field(
        default=None,
        description=(
            "the temperature as the chemist wrote it, when not one plain value (rt, reflux, 0 °C to rt); "
            "temperature (and temperature_end) then hold the numbers it stands for"
        ),
    )
    temperature_basis: SingleLine | None = Field(
        default=None,
        description=(
            "how written words became numbers: the lab's room temperature, or the solvent's boiling point and its source"
        ),
    )
    hold: Duration | None = Field(
        default=None,
        description=(
            "how long the flask is kept at this temperature after the additions; 'overnight' or 'o/n' is the lab's overnight"
        ),
    )
    hold_written: SingleLine | None = Field(default=None, description="the hold as written when in words (overnight, o/n)")
    over: Duration | None = Field(default=None, description="addition time (e.g. dropwise over 10 min)")
    sealed: bool = Field(default=False, description="vessel closed (pressure builds on heating)")
    atmosphere: SingleLine | None = None
    note: Note | None = None

    @model_validator(mode="before")
    @classmethod
    def _bench_words(cls, data: Any, info: ValidationInfo) -> Any:
        """'rt', 'reflux', 'overnight', '0 °C to rt': keep the words, fill in the numbers they stand for."""
        if not isinstance(data, dict):
            return data
        data = dict(data)
        reflux = data.pop("_reflux") if isinstance(data.get("_reflux"), bench_words.Reflux) else None
        return bench_words.expand_step(data, BenchWords.from_context(info.context), reflux)

    @field_validator("add", mode="before")
    @classmethod
    def _add(cls, v: Any) -> Any:
        if isinstance(v, str):
            return [v]
        return v

    @model_validator(mode="after")
    def _times_and_words(self) -> Step:
        for what, q in (("hold", self.hold), ("addition time (over)", self.over)):
            if q is not None and q.magnitude <= 0 and input_rules_apply():
                raise ValueError(
                    f"{what} must be longer than zero (got {q.magnitude:g} {q.units:~}); leave it out if there was none"
                )
        if self.temperature is None and (self.temperature_end is not None or self.temperature_written is not None):
            raise ValueError("temperature_end and temperature_written need the temperature itself")
        if self.hold is None and self.hold_written is not None:
            raise ValueError("hold_written needs the hold itself")
        return self

    def temperatures_c(self) -> list[float]:
        """Every temperature the step goes through (both ends of a ramp), in °C."""
        return bench_words.step_temperatures_c(self)

    def max_temp_c(self) -> float | None:
        """The highest temperature of the step: what pressure and boiling-point checks must use."""
        return max(self.temperatures_c(), default=None)

    def min_temp_c(self) -> float | None:
        """The lowest temperature of the step: what freezing checks must use."""
        return min(self.temperatures_c(), default=None)


class Attachment(_Model):
    """A file kept beside the run (spectrum, photo, raw NMR data), known by its SHA-256."""

    name: SingleLine
    sha256: str = Field(pattern=r"^[0-9a-f]{64}$")
    size: int = Field(ge=0)
    media_type: SingleLine | None = None
    added: SingleLine | None = None


class Run(_Model):
    """One experiment: the lines, the order of additions, and what came of it."""

    id: RunId | None = Field(default=None, description="notebook id; assigned when first saved")
    title: Title = Field(min_length=1)
    chemist: SingleLine | None = None
    date: _dt.date | None = None
    page: SingleLine | None = Field(default=None, description="paper notebook page reference")
    screen: RunId | None = Field(default=None, description="id of the screen this run belongs to")
    factors: dict[SingleLine, SingleLine] = Field(
        default_factory=dict, max_length=MAX_TAGS, description="levels of the screen's varied conditions in this run"
    )
    status: Literal["planned", "running", "done", "failed"] = "done"
    tags: list[SingleLine] = Field(default_factory=list, max_length=MAX_TAGS)
    intermediate: SmilesText | None = Field(default=None, description="SMILES of the strained intermediate the run releases")
    intermediate_name: SingleLine | None = None
    limiting: SingleLine | None = Field(default=None, description="name of the limiting line (default: the precursor)")
    lines: list[Line] = Field(min_length=1, max_length=MAX_LINES)
    steps: list[Step] = Field(default_factory=list, max_length=MAX_STEPS)
    vessel: Volume | None = Field(
        default=None,
        description="inner volume of the reaction vessel (e.g. '15 mL'); used for the sealed-vessel pressure and fill checks",
    )
    outcome: Outcome | None = None
    notes: Note | None = None
    attachments: list[Attachment] = Field(default_factory=list, max_length=MAX_ATTACHMENTS)

    @model_validator(mode="before")
    @classmethod
    def _reflux(cls, data: Any) -> Any:
        """Tell each step what 'reflux' means in this run (its solvent's boiling point), if any step says it."""
        if not isinstance(data, dict) or not isinstance(data.get("steps"), list):
            return data
        if not any(
            isinstance(st, dict) and isinstance(st.get("temperature"), str) and "reflux" in st["temperature"].lower()
            for st in data["steps"]
        ):
            return data
        reflux = bench_words.run_reflux(data.get("lines"))
        steps = [{**st, "_reflux": reflux} if isinstance(st, dict) else st for st in data["steps"]]
        return {**data, "steps": steps}

    @field_validator("vessel")
    @classmethod
    def _vessel(cls, v):
        return _positive(v, "vessel volume")

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
    def _names(self) -> Run:
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

    def _repr_html_(self) -> str:
        """How Jupyter shows a run: structures, amounts, outcome and checks (html_display.py)."""
        from .html_display import run_html

        return run_html(self)


class Screen(_Model):
    """A named set of runs that vary stated conditions around one base."""

    id: RunId | None = None
    name: SingleLine = Field(min_length=1)
    description: Note | None = None
    factors: dict[SingleLine, list[SingleLine]] = Field(
        default_factory=dict, max_length=MAX_TAGS, description="varied condition -> levels"
    )
    runs: list[RunId] = Field(default_factory=list, max_length=10_000, description="ids of the runs in the screen")
    base_run: RunId | None = None
    chemist: SingleLine | None = None
    scale: SingleLine | None = None


def load_run(data: Any, words: BenchWords | None = None) -> Run:
    """A Run from a parsed run file (dict), or a RecordError naming record and field.

    `words` are the notebook's meaning of 'rt' and 'overnight' (`settings.bench_words`);
    without them the documented defaults apply.
    """
    if isinstance(data, Run):
        return data
    if not isinstance(data, dict):
        raise RecordError("a run must be a JSON object with at least 'title' and 'lines'", "see schemas/run.schema.json")
    try:
        return Run.model_validate(data, context={bench_words.CONTEXT_KEY: words or BenchWords()})
    except ValidationError as exc:
        raise explain(exc, data) from None
    except UnitError as exc:  # a quantity outside a pydantic field context
        raise RecordError(exc.message, exc.hint) from None


def with_bench_words(run: Run, words: BenchWords | None) -> Run:
    """The run with its written words ('rt', 'overnight') read again with this notebook's meaning.

    A run file is read before the notebook it goes to is known; the words it kept
    (``temperature_written``, ``hold_written``) are what let the numbers follow the lab.
    """
    if words is None or words == BenchWords() or not any(s.temperature_written or s.hold_written for s in run.steps):
        return run
    data = run.to_json_dict()
    for st in data.get("steps", []):
        if st.get("temperature_written"):
            st["temperature"] = st.pop("temperature_written")
            st.pop("temperature_end", None)
            st.pop("temperature_basis", None)
        if st.get("hold_written"):
            st["hold"] = st.pop("hold_written")
    return load_run(data, words)


#: Largest run file read: a run of hundreds of lines with full notes is well under 1 MB, so
#: more is not a run file (a device, a wrong path). Common practice, no source.
RUN_FILE_MAX_BYTES = 16 * 2**20


def read_text_limited(path: str, limit: int = RUN_FILE_MAX_BYTES, stream=None, what: str = "a run file") -> str:
    """The UTF-8 text of `path` ('-': `stream`, standard input), refused past `limit` bytes.

    Read in one bounded call, so /dev/zero, a huge or sparse file or an endless pipe ends in
    a message, not in memory running out.
    """
    source = "standard input" if path == "-" else path
    hint = f"give {what} (UTF-8 JSON) of at most {limit // 2**20} MB"
    try:
        if path == "-":
            raw = stream.buffer.read(limit + 1) if hasattr(stream, "buffer") else stream.read(limit + 1)
        else:
            p = Path(path)
            if not p.exists():
                raise RecordError(f"no file {path}", f"give the path of {what}")
            if p.is_dir():
                raise RecordError(f"{path} is a folder, not {what}", f"give the path of {what}")
            with p.open("rb") as fh:
                raw = fh.read(limit + 1)
    except OSError as exc:
        raise RecordError(f"cannot read {source}: {exc.strerror or exc}", hint) from None
    if len(raw) > limit:
        raise RecordError(f"{source} is larger than {limit // 2**20} MB, too large for {what}", hint)
    if isinstance(raw, str):
        return raw
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise RecordError(f"cannot read {source}: it is not UTF-8 text ({exc.reason} at byte {exc.start})", hint) from None


def load_run_text(text: str, source: str = "run file", words: BenchWords | None = None) -> Run:
    try:
        data = loads_once(text, source)
    except json.JSONDecodeError as exc:
        raise RecordError(
            f"{source} is not valid JSON (line {exc.lineno}, column {exc.colno}: {exc.msg})", "fix the JSON syntax"
        ) from None
    except RecursionError:
        raise RecordError(f"{source} is nested too deeply to be a run file", "check the file is a Trapbook run (JSON)") from None
    except ValueError as exc:  # e.g. an integer of more digits than Python converts
        raise RecordError(
            f"{source} holds a value that cannot be read ({shown_input(str(exc), 80)})", "check the numbers in the file"
        ) from None
    return load_run(data, words)


def load_screen(data: Any) -> Screen:
    if not isinstance(data, dict):
        raise RecordError("a screen must be a JSON object", "see schemas/screen.schema.json")
    try:
        return Screen.model_validate(data)
    except ValidationError as exc:
        raise explain(exc, data, "screen") from None


#: json.dumps with these options builds a new encoder on every call; chains hash hundreds of
#: thousands of small dicts when a group opens, so one encoder of the same options is kept.
_CANONICAL = json.JSONEncoder(sort_keys=True, separators=(",", ":"), ensure_ascii=False)


def canonical_json(obj: Any) -> str:
    """Deterministic JSON for hashing: sorted keys, no spaces, UTF-8 kept."""
    return _CANONICAL.encode(obj)


def stored_run(text: str) -> Run:
    """A run version as the notebook holds it, readable even if saved under looser rules."""
    with reading_stored():
        return Run.model_validate(json.loads(text))


def stored_screen(text: str) -> Screen:
    """A screen as the notebook holds it (see stored_run)."""
    with reading_stored():
        return Screen.model_validate(json.loads(text))
